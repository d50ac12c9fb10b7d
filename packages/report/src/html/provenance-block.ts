import { canonicalJson, type Provenance, type ResultWarning } from '@tuningfork/core';
import { escapeXml } from '../primitives/escape.js';

/**
 * The provenance block: for each record, operation, tool version, seed, hashed inputs (name,
 * SHA-256, bytes) and the resolved options as canonical JSON (escaped). Long options are kept
 * whole inside a collapsible element.
 */
export function provenanceBlock(records: readonly Provenance[]): string {
  if (!records.length) return '<p class="empty">No provenance recorded.</p>';
  return records
    .map((p) => {
      const inputs = p.inputs.length
        ? `<div class="table-wrap"><table><thead><tr><th>input</th><th>SHA-256</th><th data-type="number">bytes</th></tr></thead><tbody>${p.inputs
            .map((i) => `<tr><td>${escapeXml(i.name)}</td><td class="hash">${escapeXml(i.sha256)}</td><td class="num">${escapeXml(String(i.bytes))}</td></tr>`)
            .join('')}</tbody></table></div>`
        : '<p class="empty">No hashed inputs.</p>';
      const options = JSON.stringify(JSON.parse(canonicalJson(p.options ?? null)), null, 2);
      return (
        `<div class="prov" data-operation="${escapeXml(p.operation)}"><dl>` +
        `<dt>operation</dt><dd>${escapeXml(p.operation)}</dd>` +
        `<dt>tool</dt><dd>${escapeXml(p.tool)} ${escapeXml(p.version)}</dd>` +
        `<dt>seed</dt><dd>${p.seed === null ? 'none (deterministic)' : escapeXml(String(p.seed))}</dd>` +
        `</dl>${inputs}<details${options.length < 1500 ? ' open' : ''}><summary>options</summary><pre>${escapeXml(options)}</pre></details></div>`
      );
    })
    .join('');
}

/** A list of warnings (code and message, escaped); empty string when there are none. */
export function warningsBlock(warnings: readonly ResultWarning[] | undefined): string {
  if (!warnings?.length) return '';
  return `<div class="warnings"><strong>Warnings</strong><ul>${warnings.map((w) => `<li><code>${escapeXml(w.code)}</code>: ${escapeXml(w.message)}</li>`).join('')}</ul></div>`;
}
