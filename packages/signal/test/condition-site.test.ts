import { describe, expect, it } from 'vitest';
import { correlation, expectAllClose } from '@tuningfork/test-utils';
import { rng } from '@tuningfork/core';
import { bleachCurve, simulateSession } from '@tuningfork/simulate';
import { butterworth, conditionSite, sosfiltfilt } from '../src/index.js';

/**
 * A site built from the multiplicative model S = B_S(1 + v)(1 + m) + noise, C = B_C(1 + m) + noise,
 * with different bleaching per channel, a sparse transient v and a shared artefact m that does
 * not coincide with the transients (so v and m are independent by construction).
 */
function syntheticSite(n: number, fs: number, noise: number, seed: number) {
  const g = rng(seed);
  const v = new Float64Array(n);
  const m = new Float64Array(n);
  const s = new Float64Array(n);
  const c = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    const t = i / fs;
    const ph = t % 20;
    v[i] = ph > 3 && ph < 5 ? 0.04 * Math.sin((Math.PI * (ph - 3)) / 2) ** 2 : 0;
    const pa = (t + 7) % 31;
    m[i] = pa < 1.5 ? -0.05 * Math.sin((Math.PI * pa) / 1.5) ** 2 : 0;
    const bs = 1.2 + 0.4 * Math.exp(-t / 80) + 0.3 * Math.exp(-t / 900);
    const bc = 0.8 + 0.1 * Math.exp(-t / 150) + 0.25 * Math.exp(-t / 500);
    s[i] = bs * (1 + v[i]!) * (1 + m[i]!) + noise * g.normal();
    c[i] = bc * (1 + m[i]!) + noise * g.normal();
  }
  return { site: { name: 'synthetic', signal: { values: s, sampleRate: fs, t0: 0 }, control: { values: c, sampleRate: fs, t0: 0 } }, v, m };
}

describe('conditionSite', () => {
  it('recovers the transient and removes the shared artefact on the multiplicative model', () => {
    const fs = 100;
    const { site, v, m } = syntheticSite(90000, fs, 0.0005, 1);
    const r = conditionSite(site);
    const lp = butterworth({ order: 4, cutoffHz: 10, sampleRate: fs });
    const truth = sosfiltfilt(lp, v);
    const art = sosfiltfilt(lp, m);
    // Constructed truth: correlation near 1 (noise 0.05 % of F), artefact correlation near 0.
    expect(correlation(r.dff.values, truth)).toBeGreaterThan(0.995);
    expect(Math.abs(correlation(r.dff.values, art))).toBeLessThan(0.02);
    // Divisive detrending makes the relative artefact identical in both channels: slope 1.
    expectAllClose(r.fit!.slope, 1, { atol: 0.01 });
    expect(r.motionCorrected).toBe(true);
    expect(r.flags).toEqual([]);
    // Every intermediate is returned on the input grid.
    for (const u of [r.filtered.signal, r.filtered.control, r.fittedControl!, r.dff, r.z.signal]) expect(u.values.length).toBe(90000);
    // z-scores are the ΔF/F standardised over the session (population sd).
    expectAllClose(r.z.signal.values[1234]!, (r.dff.values[1234]! - r.z.center) / r.z.scale, { rtol: 1e-12 });
  });

  it("without detrending gives ΔF/F = (S − Ĉ)/Ĉ, zero when S = 2C + 0.1 exactly (SIGNALS.md §1.6)", () => {
    const n = 5000;
    const c = Float64Array.from({ length: n }, (_, i) => 1 + 0.1 * Math.sin(i / 50) + 0.02 * Math.sin(i / 7));
    const s = Float64Array.from(c, (x) => 2 * x + 0.1);
    const r = conditionSite({ name: 'exact', signal: { values: s, sampleRate: 100, t0: 0 }, control: { values: c, sampleRate: 100, t0: 0 } }, { detrend: 'none', lowPassHz: null, fitLowPassHz: null });
    expectAllClose(r.dff.values, new Float64Array(n), { atol: 1e-12 });
    expectAllClose([r.fit!.slope, r.fit!.intercept], [2, 0.1], { rtol: 1e-10 });
  });

  it('does not divide by a control without variance: flags it and uses the bleaching baseline', () => {
    const { site } = syntheticSite(30000, 100, 0.0005, 2);
    const flat = { ...site, control: { ...site.control, values: new Float64Array(30000).fill(0.9) } };
    const r = conditionSite(flat);
    expect(r.motionCorrected).toBe(false);
    expect(r.flags).toContain('control-degenerate');
    expect(r.fit).toBeNull();
    expect(r.warnings.map((w) => w.code)).toContain('NO_MOTION_CORRECTION');
    // ΔF/F is relative to the signal's own bleaching fit: finite and centred near 0.
    expect(r.dff.values.every(Number.isFinite)).toBe(true);
    expect(Math.abs(r.z.center)).toBeLessThan(0.01);
  });

  it('flags a saturated control segment and falls back to the bleaching baseline', () => {
    const { site } = syntheticSite(30000, 100, 0.0005, 3);
    const c = Float64Array.from(site.control.values);
    let mx = -Infinity;
    for (const x of c) mx = Math.max(mx, x);
    c.fill(mx, 1000, 1100);
    const r = conditionSite({ ...site, control: { ...site.control, values: c } });
    expect(r.flags).toContain('control-clipped');
    expect(r.motionCorrected).toBe(false);
  });

  it('gives a constant (dead) sensor channel a NaN z-score with a flag, not z-scored rounding residue', () => {
    // Before: ΔF/F ≈ 1e-19 (rounding) divided by its own sd ≈ 1e-15 gave z values up to ≈ 14 with
    // only 'low-r2'/'slope-nonpositive' flags (default chain), or all-NaN z silently (detrend 'none').
    const { site } = syntheticSite(30000, 100, 0.0005, 5);
    const flat = { ...site, signal: { ...site.signal, values: new Float64Array(30000).fill(2) } };
    for (const options of [{}, { detrend: 'none' as const }, { zScore: 'robust' as const }]) {
      const r = conditionSite(flat, options);
      expect(r.flags).toContain('signal-degenerate');
      expect(r.warnings.map((w) => w.code)).toContain('SIGNAL_DEGENERATE');
      expect(r.z.signal.values.every((v) => Number.isNaN(v))).toBe(true);
      expect(r.z.scale).toBeNaN();
      // ΔF/F of a constant sensor is 0 (closed form); 1e-12 bounds the rounding of the chain.
      expectAllClose(r.dff.values, new Float64Array(30000), { atol: 1e-12 });
    }
    // A live sensor is not flagged.
    expect(conditionSite(site).flags).not.toContain('signal-degenerate');
  });

  it('rejects unequal channel lengths and NaN runs with codes naming where', () => {
    const { site } = syntheticSite(3000, 100, 0.001, 4);
    expect(() => conditionSite({ ...site, control: { ...site.control, values: site.control.values.subarray(0, 2999) } })).toThrow(expect.objectContaining({ code: 'TF_SHAPE_MISMATCH' }));
    const s = Float64Array.from(site.signal.values);
    s.fill(NaN, 1500, 1520);
    expect(() => conditionSite({ ...site, signal: { ...site.signal, values: s } })).toThrow(expect.objectContaining({ code: 'TF_NON_FINITE', details: expect.objectContaining({ index: 1500, time: 15 }) }));
    // With gap splitting (no bleaching fit), the gap stays NaN and the rest is corrected.
    const r = conditionSite({ ...site, signal: { ...site.signal, values: s } }, { nan: 'split', detrend: 'none' });
    expect(Number.isNaN(r.dff.values[1510]!)).toBe(true);
    expect(Number.isFinite(r.dff.values[100]!)).toBe(true);
    expect(r.warnings.map((w) => w.code)).toContain('GAPS_SPLIT');
  });

  it('recovers the simulated ΔF/F at default SNR (r ≥ 0.98) and removes the motion artefacts (|r| ≤ 0.05)', () => {
    // Reference: the simulator's ground truth (truth.dff, truth.artefact) of a default 30-minute
    // session; both traces are compared after the chain's own 10 Hz low-pass. Criteria from the issue.
    const sim = simulateSession({ durationSec: 1800, seed: 1 });
    const lp = butterworth({ order: 4, cutoffHz: 10, sampleRate: 1000 });
    const art = sosfiltfilt(lp, sim.truth.artefact);
    sim.session.photometry.forEach((site, k) => {
      const r = conditionSite(site);
      const truth = sosfiltfilt(lp, sim.truth.dff[k]!);
      expect(correlation(r.dff.values, truth), `${site.name} vs truth`).toBeGreaterThanOrEqual(0.98);
      expect(Math.abs(correlation(r.dff.values, art)), `${site.name} vs artefact`).toBeLessThanOrEqual(0.05);
      // An oracle that divides by the TRUE bleaching curves bounds what any correction can reach.
      const bl = sim.truth.bleaching[k]!;
      const oracleRaw = Float64Array.from(site.signal.values, (v, i) => v / bleachCurve(bl.signal, i / 1000) / (site.control.values[i]! / bleachCurve(bl.control, i / 1000)) - 1);
      expect(correlation(r.dff.values, truth)).toBeGreaterThanOrEqual(correlation(sosfiltfilt(lp, oracleRaw), truth) - 0.01);
      expect(r.motionCorrected).toBe(true);
    });
  });
});
