import { TuningforkError, VERSION } from '@tuningfork/core';
import { classCountsFigure } from '../figures/class-counts-figure.js';
import { tuningMapFigure } from '../figures/tuning-map-figure.js';
import { escapeXml } from '../primitives/escape.js';
import { formatNumber } from '../primitives/format.js';
import type { BatchReportInput } from '../types.js';
import { figureBlock, htmlPage, type PageSection } from './page.js';
import { provenanceBlock, warningsBlock } from './provenance-block.js';
import { provenanceList, tuningTable } from './session-report.js';
import { htmlTable } from './table.js';

/** True for a relative link without scheme or host (safe to put in href: it cannot reach the network by itself). */
export function isRelativeLink(href: string): boolean {
  return /^(?![A-Za-z][A-Za-z0-9+.-]*:)(?![\\/]{2})[^\s<>"'`]+$/.test(href);
}

function sessionsTable(input: BatchReportInput): string {
  const head = ['session', 'sites', 'units', 'trials', 'warnings'];
  const num = (v: number | undefined) => (v === undefined ? '<td class="num" data-value=""></td>' : `<td class="num" data-value="${escapeXml(String(v))}">${escapeXml(formatNumber(v, { decimals: 0 }))}</td>`);
  const rows = input.sessions.map((s) => {
    const name = s.href !== undefined && isRelativeLink(s.href) ? `<a href="${escapeXml(s.href)}">${escapeXml(s.session)}</a>` : escapeXml(s.session);
    return `<tr><td>${name}</td>${num(s.sites)}${num(s.units)}${num(s.trials)}${num(s.warnings)}</tr>`;
  });
  return `<div class="table-wrap"><table class="sortable" id="sessions-table"><caption>Sessions</caption><thead><tr>${head
    .map((h, j) => `<th scope="col" data-type="${j === 0 ? 'text' : 'number'}"><button type="button">${h}</button></th>`)
    .join('')}</tr></thead><tbody>${rows.join('')}</tbody></table></div>`;
}

/**
 * A self-contained HTML report summarising a batch of sessions: a sessions table (linking each
 * session's report when its href is a relative path), the tuning map of all cells, class counts,
 * a sortable table of every cell, extra tables and provenance. Same guarantees as sessionReport:
 * inline SVG and CSS only, no network loads (CSP), every user string escaped. Figure ids:
 * batch-tuning-map, batch-class-counts.
 *
 * @throws {TuningforkError} TF_BAD_OPTION when provenance is missing.
 */
export function batchReport(input: BatchReportInput): string {
  if (!input.provenance) throw new TuningforkError('TF_BAD_OPTION', 'batchReport: provenance is required (version, options, seed, input hashes).', {});
  const sections: PageSection[] = [];
  sections.push({ id: 'sessions', heading: 'Sessions', body: sessionsTable(input) });
  const parts = ['<div class="figures">', figureBlock(tuningMapFigure(input.cells, { id: 'batch-tuning-map', title: 'Tuning map, all sessions' }), 'Each cell of every session at its unique reward and movement explained variance; colour and shape give the class, fill the sign.')];
  if (input.counts) parts.push(figureBlock(classCountsFigure(input.counts, { id: 'batch-class-counts', title: 'Cells per class, all sessions' }), 'Cells per class over the batch.'));
  parts.push('</div>', htmlTable(tuningTable(input.cells, 'All cells', true), 'cells-table'));
  sections.push({ id: 'tuning', heading: 'Tuning', body: parts.join('') });
  if (input.tables?.length) sections.push({ id: 'tables', heading: 'Tables', body: input.tables.map((t, i) => htmlTable(t, `table-${i}`)).join('') });
  sections.push({ id: 'provenance', heading: 'Provenance', body: warningsBlock(input.warnings) + provenanceBlock(provenanceList(input.provenance)) });
  const title = input.title ?? 'tuningfork batch report';
  return htmlPage(title, [`${input.sessions.length} sessions, ${input.cells.length} cells`], sections, `Made by tuningfork ${VERSION}. Self-contained: no network requests.`);
}
