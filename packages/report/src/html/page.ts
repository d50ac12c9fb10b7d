import { createHash } from 'node:crypto';
import { escapeXml } from '../primitives/escape.js';

/**
 * The inline script of every report: makes tables with class "sortable" sortable by clicking a
 * column header (numbers by their data-value, NaN last; text with numeric-aware collation).
 * No dependencies, no network.
 */
export const SORT_SCRIPT = `(function () {
  function cellKey(td, numeric) {
    if (!numeric) return td.textContent || '';
    var v = td.getAttribute('data-value');
    return v === null || v === '' ? NaN : Number(v);
  }
  var tables = document.querySelectorAll('table.sortable');
  Array.prototype.forEach.call(tables, function (table) {
    var heads = table.tHead.rows[0].cells;
    Array.prototype.forEach.call(heads, function (th, col) {
      var button = th.querySelector('button');
      if (!button) return;
      button.addEventListener('click', function () {
        var ascending = th.getAttribute('aria-sort') !== 'ascending';
        Array.prototype.forEach.call(heads, function (h) { h.removeAttribute('aria-sort'); });
        th.setAttribute('aria-sort', ascending ? 'ascending' : 'descending');
        var numeric = th.getAttribute('data-type') === 'number';
        var body = table.tBodies[0];
        var rows = Array.prototype.slice.call(body.rows);
        rows.sort(function (a, b) {
          var x = cellKey(a.cells[col], numeric);
          var y = cellKey(b.cells[col], numeric);
          if (numeric) {
            var xn = x !== x, yn = y !== y;
            if (xn || yn) return xn === yn ? 0 : xn ? 1 : -1;
            return ascending ? x - y : y - x;
          }
          var c = String(x).localeCompare(String(y), undefined, { numeric: true });
          return ascending ? c : -c;
        });
        rows.forEach(function (r) { body.appendChild(r); });
      });
    });
  });
})();`;

/**
 * Content-Security-Policy of every report: nothing may load from anywhere (default-src 'none');
 * images only from data: URLs; styles inline; the one inline script allowed by its SHA-256 hash,
 * so injected markup could never run script even if escaping failed.
 */
export const REPORT_CSP = `default-src 'none'; img-src data:; style-src 'unsafe-inline'; script-src 'sha256-${createHash('sha256').update(SORT_SCRIPT).digest('base64')}'; base-uri 'none'; form-action 'none'`;

const CSS = `
:root { color-scheme: light; }
* { box-sizing: border-box; }
body { margin: 0; font: 14px/1.45 'Helvetica Neue', Helvetica, Arial, 'DejaVu Sans', sans-serif; color: #222; background: #f6f6f4; }
header.top { background: #fff; border-bottom: 1px solid #ddd; padding: 18px 28px 10px; }
header.top h1 { margin: 0 0 4px; font-size: 22px; }
header.top p { margin: 2px 0; color: #555; }
nav.toc { display: flex; flex-wrap: wrap; gap: 6px 18px; margin-top: 10px; }
nav.toc a { color: #2a5aa6; text-decoration: none; font-weight: 600; }
nav.toc a:hover { text-decoration: underline; }
main { padding: 8px 28px 40px; max-width: 1640px; }
section { margin-top: 26px; }
section > h2 { font-size: 18px; border-bottom: 2px solid #2a5aa6; padding-bottom: 3px; margin: 0 0 12px; }
h3 { font-size: 15px; margin: 18px 0 8px; }
.figures { display: flex; flex-wrap: wrap; gap: 14px; align-items: flex-start; }
figure.fig { margin: 0; background: #fff; border: 1px solid #ddd; border-radius: 4px; padding: 6px; max-width: 100%; }
figure.fig svg { display: block; max-width: 100%; height: auto; }
figure.fig figcaption { font-size: 12px; color: #555; padding: 4px 4px 0; max-width: 760px; }
.table-wrap { overflow: auto; max-height: 560px; background: #fff; border: 1px solid #ddd; border-radius: 4px; margin: 8px 0 14px; }
table { border-collapse: collapse; font-size: 13px; width: max-content; min-width: 100%; }
caption { text-align: left; font-weight: 600; padding: 6px 8px; caption-side: top; }
th, td { padding: 4px 10px; border-bottom: 1px solid #eee; }
thead th { position: sticky; top: 0; background: #f0f0ec; text-align: left; z-index: 1; }
th button { font: inherit; font-weight: 600; background: none; border: 0; padding: 0; cursor: pointer; color: inherit; }
th[aria-sort="ascending"] button::after { content: ' \\25B2'; font-size: 10px; }
th[aria-sort="descending"] button::after { content: ' \\25BC'; font-size: 10px; }
td.num, th[data-type="number"] { text-align: right; font-variant-numeric: tabular-nums; }
tbody tr:nth-child(even) { background: #fafaf8; }
.warnings { background: #fff7e6; border: 1px solid #f0c36d; border-radius: 4px; padding: 8px 14px; }
.warnings code { font-weight: 600; }
.prov { background: #fff; border: 1px solid #ddd; border-radius: 4px; padding: 8px 14px; margin-bottom: 10px; }
.prov dl { display: grid; grid-template-columns: max-content 1fr; gap: 2px 14px; margin: 4px 0; }
.prov dt { font-weight: 600; color: #555; }
.prov dd { margin: 0; word-break: break-all; }
pre { background: #f4f4f2; padding: 8px; overflow: auto; max-height: 360px; font-size: 12px; white-space: pre-wrap; word-break: break-all; }
code, .hash { font-family: 'DejaVu Sans Mono', Menlo, Consolas, monospace; font-size: 12px; }
.empty { color: #777; font-style: italic; }
footer { color: #777; font-size: 12px; padding: 0 28px 24px; }
`;

/** One section of a report page: anchor id, heading, and body markup. */
export interface PageSection {
  readonly id: string;
  readonly heading: string;
  readonly body: string;
}

/**
 * A complete, self-contained HTML document: UTF-8, the CSP of REPORT_CSP, inline CSS, the table
 * sort script, a header with a table of contents linking the sections. `title` and `subtitle`
 * lines are escaped; section bodies are inserted as markup.
 */
export function htmlPage(title: string, subtitle: readonly string[], sections: readonly PageSection[], footer: string): string {
  const toc = sections.map((s) => `<a href="#${escapeXml(s.id)}">${escapeXml(s.heading)}</a>`).join('');
  return [
    '<!DOCTYPE html>',
    '<html lang="en">',
    '<head>',
    '<meta charset="utf-8">',
    `<meta http-equiv="Content-Security-Policy" content="${escapeXml(REPORT_CSP)}">`,
    '<meta name="viewport" content="width=device-width, initial-scale=1">',
    '<meta name="referrer" content="no-referrer">',
    `<title>${escapeXml(title)}</title>`,
    `<style>${CSS}</style>`,
    '</head>',
    '<body>',
    `<header class="top"><h1>${escapeXml(title)}</h1>${subtitle.map((l) => `<p>${escapeXml(l)}</p>`).join('')}<nav class="toc">${toc}</nav></header>`,
    '<main>',
    ...sections.map((s) => `<section id="${escapeXml(s.id)}"><h2>${escapeXml(s.heading)}</h2>${s.body}</section>`),
    '</main>',
    `<footer>${escapeXml(footer)}</footer>`,
    `<script>${SORT_SCRIPT}</script>`,
    '</body>',
    '</html>',
    '',
  ].join('\n');
}

/** A figure wrapper: the SVG markup and an escaped caption. */
export function figureBlock(svg: string, caption: string): string {
  return `<figure class="fig">${svg}${caption ? `<figcaption>${escapeXml(caption)}</figcaption>` : ''}</figure>`;
}
