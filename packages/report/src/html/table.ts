import { escapeXml } from '../primitives/escape.js';
import { formatNumber } from '../primitives/format.js';
import type { ReportTable } from '../types.js';

/**
 * A sortable HTML table (class "sortable"; the report's inline script sorts it when a header is
 * clicked). Numbers are formatted with formatNumber (column `decimals`, else 3 significant digits)
 * and keep their full value in data-value for sorting; NaN shows as '—' and sorts last. Every
 * caption, header and cell text is escaped.
 *
 * @param table - Caption, columns and rows (missing keys show as empty cells).
 * @param id - Optional element id (letters, digits, '-', '_').
 */
export function htmlTable(table: ReportTable, id = ''): string {
  const cols = table.columns;
  const types = cols.map((c) => c.type ?? (table.rows.some((r) => typeof r[c.key] === 'number') ? 'number' : 'text'));
  const head = cols
    .map((c, j) => {
      const label = c.unit ? `${c.label} (${c.unit})` : c.label;
      return `<th scope="col" data-type="${types[j]}"><button type="button">${escapeXml(label)}</button></th>`;
    })
    .join('');
  const body = table.rows
    .map((r) => {
      const tds = cols.map((c, j) => {
        const v = r[c.key];
        if (v === undefined) return '<td></td>';
        if (typeof v === 'number') {
          const text = formatNumber(v, c.decimals !== undefined ? { decimals: c.decimals } : {});
          return `<td class="num" data-value="${Number.isNaN(v) ? '' : escapeXml(String(v))}">${escapeXml(text)}</td>`;
        }
        return types[j] === 'number' ? `<td class="num" data-value="">${escapeXml(v)}</td>` : `<td>${escapeXml(v)}</td>`;
      });
      return `<tr>${tds.join('')}</tr>`;
    })
    .join('');
  const idAttr = id && /^[A-Za-z][A-Za-z0-9_-]*$/.test(id) ? ` id="${id}"` : '';
  return `<div class="table-wrap"><table class="sortable"${idAttr}><caption>${escapeXml(table.caption)}</caption><thead><tr>${head}</tr></thead><tbody>${body}</tbody></table></div>`;
}
