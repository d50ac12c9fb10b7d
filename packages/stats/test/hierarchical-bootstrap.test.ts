import { describe, expect, it } from 'vitest';
import { expectAllClose } from '@tuningfork/test-utils';
import { hierarchicalBootstrap, hierarchicalBootstrapDifference } from '../src/index.js';

/** INFERENCE.md §1.5: Y[a][i] = a + 0.5 cos(2a + i) + 0.1 i, a = 0..3 animals, i = 0..4 trials. */
function checkData() {
  const y = new Float64Array(20);
  const animal = new Float64Array(20);
  for (let a = 0; a < 4; a++) for (let i = 0; i < 5; i++) { y[a * 5 + i] = a + 0.5 * Math.cos(2 * a + i) + 0.1 * i; animal[a * 5 + i] = a; }
  return { matrix: { data: y, rows: 20, cols: 1 }, animal };
}

describe('hierarchicalBootstrap', () => {
  it('reaches the derived bootstrap variances of the grand mean: animals + trials 0.3390404211, animals only 0.3329130287', () => {
    const d = checkData();
    const both = hierarchicalBootstrap(d, { resamples: 200000, seed: 3 });
    const top = hierarchicalBootstrap(d, { levels: ['animal'], resamples: 200000, seed: 3 });
    // INFERENCE.md §1.5 (derived here: Var* = S_b/A + S_w/(An) and S_b/A). Relative SE of a variance
    // estimated from 200,000 near-normal replicates ≈ √(2/B) = 0.32%; ±1% is 3 SE and still tells
    // the two schemes apart (they differ by 1.8%).
    expectAllClose(both.standardError[0]! ** 2, 0.3390404211, { rtol: 0.01 });
    expectAllClose(top.standardError[0]! ** 2, 0.3329130287, { rtol: 0.01 });
    expectAllClose(both.estimate[0]!, 1.6920382664, { rtol: 1e-10 }); // grand mean, INFERENCE.md §1.5
    expect(both.levels).toEqual(['animal', 'trial']);
    expect(top.levels).toEqual(['animal']);
  });
  it('warns when fewer than 5 animals and reports the counts of animals, sessions and trials', () => {
    const r = hierarchicalBootstrap(checkData(), { resamples: 200 });
    expect(r.warnings.map((w) => w.code)).toContain('few-top-level-units');
    expect(r.animals).toEqual([4]);
    expect(r.trials).toEqual([20]);
  });
  it('resamples sessions within animals; without resampling any level the band has zero width', () => {
    const n = 60, T = 3;
    const data = new Float64Array(n * T);
    const animal = new Float64Array(n);
    const session = new Float64Array(n);
    for (let i = 0; i < n; i++) {
      animal[i] = Math.floor(i / 10); // 6 animals
      session[i] = Math.floor(i / 5) % 2; // 2 sessions each (labels reused across animals)
      for (let j = 0; j < T; j++) data[i * T + j] = animal[i]! + 0.3 * session[i]! + Math.sin(i + j);
    }
    const all = hierarchicalBootstrap({ matrix: { data, rows: n, cols: T }, animal, session }, { resamples: 500, seed: 1 });
    expect(all.levels).toEqual(['animal', 'session', 'trial']);
    expect(all.sessions).toEqual([12]);
    expect(all.warnings.map((w) => w.code)).not.toContain('few-top-level-units');
    const sess = hierarchicalBootstrap({ matrix: { data, rows: n, cols: T }, animal, session }, { levels: ['session'], resamples: 200, seed: 1 });
    expect(sess.high[0]! - sess.low[0]!).toBeGreaterThan(0);
    // Resampling nothing below: every replicate is the full data set, so low = high = estimate.
    const none = hierarchicalBootstrap({ matrix: { data, rows: n, cols: T }, animal: new Float64Array(n) }, { levels: ['animal'], resamples: 50 });
    for (let j = 0; j < T; j++) expectAllClose([none.low[j]!, none.high[j]!], [none.estimate[j]!, none.estimate[j]!], { rtol: 1e-14, atol: 1e-15 });
  });
  it('rejects bad levels, session level without labels and mislabelled rows with codes', () => {
    const d = checkData();
    expect(() => hierarchicalBootstrap(d, { levels: ['session'] })).toThrow(expect.objectContaining({ code: 'TF_BAD_OPTION' }));
    expect(() => hierarchicalBootstrap(d, { levels: [] })).toThrow(expect.objectContaining({ code: 'TF_BAD_OPTION' }));
    expect(() => hierarchicalBootstrap({ ...d, animal: new Float64Array(3) })).toThrow(expect.objectContaining({ code: 'TF_SHAPE_MISMATCH' }));
    expect(() => hierarchicalBootstrap({ ...d, matrix: { data: new Float64Array(1), rows: 1, cols: 1 }, animal: [0] })).toThrow(expect.objectContaining({ code: 'TF_TOO_FEW_SAMPLES' }));
  });
});

describe('hierarchicalBootstrapDifference', () => {
  it('gives p_boot = P*(θ*_a > θ*_b) near 1 for a clear positive difference and its estimate is the difference of pooled means', () => {
    const mk = (shift: number, seed: number) => {
      const n = 48;
      const data = new Float64Array(n);
      const animal = new Float64Array(n);
      for (let i = 0; i < n; i++) { animal[i] = i % 8; data[i] = shift + 0.2 * Math.sin(seed * 7 + i * 1.7) + 0.1 * (i % 8); }
      return { matrix: { data, rows: n, cols: 1 }, animal };
    };
    const a = mk(1, 1);
    const b = mk(0, 2);
    const r = hierarchicalBootstrapDifference(a, b, { resamples: 2000, seed: 4 });
    const mean = (x: Float64Array) => x.reduce((s, v) => s + v, 0) / x.length;
    expectAllClose(r.estimate[0]!, mean(a.matrix.data) - mean(b.matrix.data), { rtol: 1e-13 }); // definition
    expect(r.pBoot[0]).toBe(1);
    expect(r.low[0]!).toBeGreaterThan(0);
    expect(r.animals).toEqual([8, 8]);
  });
});
