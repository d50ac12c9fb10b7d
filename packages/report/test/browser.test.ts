import { existsSync, mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { pathToFileURL } from 'node:url';
import { describe, expect, it } from 'vitest';
import { sessionReport } from '../src/index.js';
import { demoReportInput, XSS_CHANNEL } from './support/demo-data.js';
import { decodePng } from './support/png-decode.js';

// Debian's chromium, installed by packages/report/scripts/ensure-chromium.sh (CI runs it first).
const CHROMIUM = '/usr/bin/chromium';
const HAVE_CHROMIUM = existsSync(CHROMIUM);
// CI sets TUNINGFORK_REQUIRE_BROWSER=1 (see .ci/run): there a missing browser is a failure, not a skip.
if (!HAVE_CHROMIUM && process.env.TUNINGFORK_REQUIRE_BROWSER === '1') {
  throw new Error(`${CHROMIUM} is missing but TUNINGFORK_REQUIRE_BROWSER=1: run packages/report/scripts/ensure-chromium.sh`);
}
if (!HAVE_CHROMIUM) {
  console.warn(`browser test SKIPPED: ${CHROMIUM} is missing. Run packages/report/scripts/ensure-chromium.sh (needs root) to install Debian's chromium.`);
}

/** Variance of the luminance (0–255) of an RGBA image. */
function lumaVariance(rgba: Uint8Array): number {
  let n = 0, m = 0, s = 0;
  for (let i = 0; i < rgba.length; i += 4) {
    const y = 0.2126 * rgba[i]! + 0.7152 * rgba[i + 1]! + 0.0722 * rgba[i + 2]!;
    n++;
    const d = y - m;
    m += d / n;
    s += d * (y - m);
  }
  return s / n;
}

describe.skipIf(!HAVE_CHROMIUM)(`sessionReport in Debian chromium${HAVE_CHROMIUM ? '' : ` (skipped: ${CHROMIUM} missing; run packages/report/scripts/ensure-chromium.sh)`}`, () => {
  it('the demo report opens from a file URL with no console errors or network requests, shows every figure, renders a non-blank page, and the hostile channel name stays text', async () => {
    const { chromium } = await import('playwright-core');
    const input = demoReportInput();
    const html = sessionReport(input);
    const dir = mkdtempSync(join(tmpdir(), 'tuningfork-report-'));
    const file = join(dir, 'report.html');
    writeFileSync(file, html);
    const url = pathToFileURL(file).href;
    const profile = mkdtempSync(join(tmpdir(), 'tuningfork-chromium-'));
    const ctx = await chromium.launchPersistentContext(profile, {
      executablePath: CHROMIUM,
      args: ['--headless', '--no-sandbox', '--disable-gpu', '--disable-quic', '--no-first-run', '--disable-background-networking', '--disable-component-update', '--disable-sync'],
      viewport: { width: 1400, height: 1000 },
    });
    try {
      const page = ctx.pages()[0] ?? (await ctx.newPage());
      const requests: string[] = [];
      const problems: string[] = [];
      const dialogs: string[] = [];
      page.on('request', (r) => requests.push(r.url()));
      page.on('console', (m) => { if (m.type() === 'error' || m.type() === 'warning') problems.push(`${m.type()}: ${m.text()}`); });
      page.on('pageerror', (e) => problems.push(`pageerror: ${e.message}`));
      page.on('dialog', (d) => { dialogs.push(d.message()); void d.dismiss(); });
      await page.goto(url, { waitUntil: 'load' });

      // Every expected figure is present, is an inline SVG of the right kind, and has a visible size.
      const expected: [string, string][] = [
        ...input.qc!.map((_, i) => [`qc-${i}`, 'qc'] as [string, string]),
        ...input.responses!.map((_, i) => [`response-${i}`, 'peri-event'] as [string, string]),
        ...input.heatmaps!.map((_, i) => [`heatmap-${i}`, 'trial-heatmap'] as [string, string]),
        ...input.rasters!.map((_, i) => [`raster-${i}`, 'raster'] as [string, string]),
        ...input.kernels!.map((_, i) => [`kernels-${i}`, 'kernels'] as [string, string]),
        ['tuning-map', 'tuning-map'], ['class-counts', 'class-counts'],
      ];
      for (const [id, kind] of expected) {
        const loc = page.locator(`svg#${id}`);
        expect(await loc.count(), id).toBe(1);
        expect(await loc.getAttribute('data-figure'), id).toBe(kind);
        const box = await loc.boundingBox();
        expect(box && box.width > 100 && box.height > 100, id).toBe(true);
      }
      // Embedded heatmap PNGs decoded in the browser.
      // (Expressions are passed as strings: the test typechecks without the DOM library.)
      const decoded = await page.evaluate<number>("document.querySelectorAll('image.heatmap').length");
      expect(decoded).toBe(input.heatmaps!.length);

      // The hostile channel name is text, not an element, and triggered nothing.
      expect(await page.locator('img').count()).toBe(0);
      expect(await page.locator('header.top').innerText()).toContain(XSS_CHANNEL);
      expect(await page.locator('svg#qc-0 > title').textContent()).toContain(XSS_CHANNEL);

      // The inline sort script runs under the CSP: sorting the cell table by reward ΔR² orders it.
      await page.locator('#tuning-table th', { hasText: 'reward' }).locator('button').click();
      const col = await page.evaluate<number[]>("Array.from(document.querySelectorAll('#tuning-table tbody tr')).map((r) => Number(r.children[4].dataset.value))");
      expect(col).toEqual([...col].sort((a, b) => a - b));

      // A screenshot that is not blank: luminance variance well above that of an empty page (0).
      await page.evaluate('window.scrollTo(0, 0)');
      const shot = join(tmpdir(), 'tuningfork-report-screenshot.png');
      const png = decodePng(await page.screenshot({ path: shot }));
      expect([png.width, png.height]).toEqual([1400, 1000]);
      // Threshold: text and figures on white give variance in the hundreds; 200 ≈ a quarter of a
      // realistic figure page and far above a blank or single-colour page.
      expect(lumaVariance(png.rgba)).toBeGreaterThan(200);
      const fig = decodePng(await page.locator('svg#heatmap-0').screenshot({ path: join(tmpdir(), 'tuningfork-heatmap-screenshot.png') }));
      expect(lumaVariance(fig.rgba)).toBeGreaterThan(200);

      expect(dialogs).toEqual([]);
      expect(problems).toEqual([]);
      expect(requests.filter((u) => u !== url && !u.startsWith('data:'))).toEqual([]);
    } finally {
      await ctx.close();
      rmSync(profile, { recursive: true, force: true });
      rmSync(dir, { recursive: true, force: true });
    }
  });
});
