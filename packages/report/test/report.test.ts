import { createHash } from 'node:crypto';
import { makeProvenance } from '@tuningfork/core';
import { beforeAll, describe, expect, it } from 'vitest';
import { batchReport, htmlTable, isRelativeLink, REPORT_CSP, sessionReport, SORT_SCRIPT, type BatchReportInput, type SessionReportInput } from '../src/index.js';
import { demoReportInput, XSS_CHANNEL } from './support/demo-data.js';
import { inlineSvgs } from './support/svg.js';
import { parseXml } from './support/xml.js';

const NAMESPACES = ['http://www.w3.org/2000/svg', 'http://www.w3.org/1999/xlink'];

/** Checks every report must pass: well-formed inline SVG, one inline script allowed by its CSP hash, no external references. */
function checkSelfContained(html: string): void {
  for (const svg of inlineSvgs(html)) parseXml(svg);
  expect(html.match(/<script/g)).toHaveLength(1);
  const script = html.slice(html.indexOf('<script>') + 8, html.indexOf('</script>'));
  expect(script).toBe(SORT_SCRIPT);
  // The CSP allows exactly this script: its SHA-256 computed here with node:crypto.
  const hash = createHash('sha256').update(script).digest('base64');
  const meta = /<meta http-equiv="Content-Security-Policy" content="([^"]*)">/.exec(html);
  const csp = (meta?.[1] ?? '').replace(/&#39;/g, "'");
  expect(csp).toBe(REPORT_CSP);
  expect(csp).toContain(`script-src 'sha256-${hash}'`);
  expect(csp).toContain("default-src 'none'");
  const urls = html.match(/\b(?:https?|ftp|wss?):\/\/[^\s"'<>)]*/g) ?? [];
  expect(urls.filter((u) => !NAMESPACES.includes(u))).toEqual([]);
  // No tag loads anything: no src-like attribute in any start tag (text is escaped, so '<' only starts real tags).
  const tags = (html.match(/<[A-Za-z][^>]*>/g) ?? []).map((t) => t.replace(/"[^"]*"/g, '""'));
  expect(tags.filter((t) => /\s(?:src|srcset|poster|background|action|formaction|ping)\s*=/i.test(t))).toEqual([]);
  expect(tags.filter((t) => /^<(?:iframe|object|embed|link|img|audio|video|source|base|form)\b/i.test(t))).toEqual([]);
  expect(/@import|url\(\s*['"]?(?!#)/i.exec(html)?.[0] ?? null).toBeNull();
}

describe('sessionReport', () => {
  let input: SessionReportInput;
  let html: string;
  beforeAll(() => {
    input = demoReportInput();
    html = sessionReport(input);
  });

  it('sessionReport(input) is self-contained: well-formed inline SVG, CSP-hashed inline script, no external references', () => {
    checkSelfContained(html);
  });

  it('sessionReport(input) has every section and every expected figure id', () => {
    for (const id of ['qc', 'responses', 'models', 'tuning', 'tables', 'provenance']) expect(html.includes(`<section id="${id}">`), id).toBe(true);
    const ids = [
      ...input.qc!.map((_, i) => `qc-${i}`), ...input.responses!.map((_, i) => `response-${i}`), ...input.heatmaps!.map((_, i) => `heatmap-${i}`),
      ...input.rasters!.map((_, i) => `raster-${i}`), ...input.kernels!.map((_, i) => `kernels-${i}`), 'tuning-map', 'class-counts',
    ];
    for (const id of ids) expect(html.includes(`<svg xmlns="http://www.w3.org/2000/svg" xmlns:xlink="http://www.w3.org/1999/xlink" id="${id}"`), id).toBe(true);
  });

  it('sessionReport(input) escapes every user string: the hostile channel name and options text never appear as markup', () => {
    expect(html.includes('<img')).toBe(false);
    expect(html.includes('<b>bold')).toBe(false);
    expect(html.includes('</script><script>')).toBe(false);
    expect(html.includes('&lt;img src=x onerror=alert(1)&gt;')).toBe(true);
    expect(html.includes('&lt;/script&gt;&lt;script&gt;alert(2)&lt;/script&gt;')).toBe(true);
  });

  it('sessionReport(input) shows provenance: version, seed, input hashes and options', () => {
    const prov = html.slice(html.indexOf('<section id="provenance">'));
    expect(prov).toContain('simulateSession');
    expect(prov).toContain('<dt>seed</dt><dd>7</dd>');
    expect(prov).toMatch(/class="hash">[0-9a-f]{64}</);
    expect(prov).toContain('&quot;photometryRate&quot;: 200');
  });

  it('sessionReport without optional sections keeps only provenance; it requires provenance', () => {
    const small = sessionReport({ session: 's', provenance: makeProvenance('x', {}, null) });
    expect(small).not.toContain('<section id="qc">');
    expect(small).toContain('<section id="provenance">');
    expect(() => sessionReport({ session: 's' } as never)).toThrow(expect.objectContaining({ code: 'TF_BAD_OPTION' }));
  });
});

describe('batchReport', () => {
  const input: BatchReportInput = {
    sessions: [{ session: 's1', href: 's1/report.html', sites: 4, units: 40, trials: 350 }, { session: XSS_CHANNEL, href: 'javascript:alert(1)', sites: 2 }],
    cells: [
      { session: 's1', cell: 'site01', kind: 'site', class: 'reward', sign: 1, rewardUnique: 0.05, movementUnique: 0.001 },
      { session: XSS_CHANNEL, cell: XSS_CHANNEL, kind: 'unit', class: 'movement', sign: -1, rewardUnique: 0.002, movementUnique: 0.04 },
    ],
    counts: [{ class: 'reward', count: 1 }, { class: 'movement', count: 1 }],
    provenance: makeProvenance('batch', { sessions: [XSS_CHANNEL] }, 1),
  };

  it('batchReport(input) is self-contained, links relative session reports and shows other hrefs as text', () => {
    const html = batchReport(input);
    checkSelfContained(html);
    expect(html.includes('<a href="s1/report.html">s1</a>')).toBe(true);
    expect(html.includes('javascript:')).toBe(false);
    expect(html.includes('id="batch-tuning-map"')).toBe(true);
    expect(html.includes('id="batch-class-counts"')).toBe(true);
    expect(html.includes('<img')).toBe(false);
  });
});

describe('isRelativeLink', () => {
  it('isRelativeLink accepts plain relative paths and rejects schemes and protocol-relative URLs', () => {
    expect(['a/b.html', '../x/report.html', 'r.html#qc'].every(isRelativeLink)).toBe(true);
    expect(['javascript:alert(1)', 'https://example.org/', '//host/x', 'data:text/html,x', 'a b'].some(isRelativeLink)).toBe(false);
  });
});

describe('htmlTable', () => {
  it('htmlTable formats numbers for display, keeps full values for sorting, and escapes text', () => {
    const t = htmlTable({ caption: 'T <1>', columns: [{ key: 'n', label: 'name' }, { key: 'v', label: 'value', unit: 'Hz', decimals: 2 }], rows: [{ n: '<i>a</i>', v: 1.23456 }, { n: 'b', v: NaN }] });
    expect(t).toContain('<caption>T &lt;1&gt;</caption>');
    expect(t).toContain('<td>&lt;i&gt;a&lt;/i&gt;</td>');
    expect(t).toContain('<td class="num" data-value="1.23456">1.23</td>');
    expect(t).toContain('<td class="num" data-value="">—</td>');
    expect(t).toContain('data-type="number"><button type="button">value (Hz)</button>');
  });
});
