import { describe, expect, it } from 'vitest';
import { expectAllClose } from '@tuningfork/test-utils';
import { lockInDemodulate } from '../src/index.js';

/** SIGNALS.md §1.1 check trace: fs = 10 kHz, 2 s, x = A1 sin(2π217t + .3) + .7 sin(2π319t + 1.1) + .5, A1 = 2(1 + .1 sin 2πt). */
function checkTrace(): { x: Float64Array; a1: Float64Array } {
  const fs = 10000;
  const n = 20000;
  const x = new Float64Array(n);
  const a1 = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    const t = i / fs;
    a1[i] = 2 * (1 + 0.1 * Math.sin(2 * Math.PI * t));
    x[i] = a1[i]! * Math.sin(2 * Math.PI * 217 * t + 0.3) + 0.7 * Math.sin(2 * Math.PI * 319 * t + 1.1) + 0.5;
  }
  return { x, a1 };
}

const median = (a: ArrayLike<number>): number => {
  const s = Array.from(a).sort((p, q) => p - q);
  return s.length % 2 ? s[(s.length - 1) / 2]! : (s[s.length / 2 - 1]! + s[s.length / 2]!) / 2;
};

describe('lockInDemodulate', () => {
  const { x, a1 } = checkTrace();
  const r = lockInDemodulate({ values: x, sampleRate: 10000, t0: 0 }, { carriersHz: [217, 319], cutoffHz: 15, order: 4 });
  const R1 = r.channels[0]!.amplitude.values;
  const R2 = r.channels[1]!.amplitude.values;

  it('recovers both carrier amplitudes within the SIGNALS.md §1.1 check errors', () => {
    let e1 = 0;
    let e2 = 0;
    for (let i = 2000; i < 18000; i++) {
      e1 = Math.max(e1, Math.abs(R1[i]! - a1[i]!));
      e2 = Math.max(e2, Math.abs(R2[i]! - 0.7));
    }
    // SIGNALS.md §1.1 [np-spec, filter via scipy]: max|R1 − A1| = 2.1e-4, max|R2 − .7| = 8.5e-4 (2 digits).
    expectAllClose(e1, 2.1e-4, { rtol: 0.03 });
    expectAllClose(e2, 8.5e-4, { rtol: 0.01 });
    // R1[10000] = 2.0000001 (7 decimals).
    expectAllClose(R1[10000]!, 2.0000001, { atol: 1e-7 });
  });

  it('recovers the carrier phases and the in-phase-only value 2I = 2cos .3 · A1', () => {
    // SIGNALS.md §1.1: median phases .3000000 / 1.1000000 (7 decimals).
    expectAllClose(median(r.channels[0]!.phase.values.subarray(2000, 18000)), 0.3, { atol: 1e-7 });
    expectAllClose(median(r.channels[1]!.phase.values.subarray(2000, 18000)), 1.1, { atol: 1e-7 });
    // I-only at 10000: 2I = 1.910673 (6 decimals).
    expectAllClose(2 * r.channels[0]!.inPhase.values[10000]!, 1.910673, { atol: 1e-6 });
  });

  it('shows the edge error R1[0] = 4.23 and reports the edge duration 3/cutoff', () => {
    // SIGNALS.md §1.1: R1[0] = 4.23 (2 decimals) — the edge stays wrong whatever the padding.
    expectAllClose(R1[0]!, 4.23, { atol: 0.005 });
    expectAllClose(r.edgeSec, 0.2, { rtol: 1e-12 });
  });

  it('uses a recorded drive as the reference: refines a mismatched frequency and reports phase relative to it', () => {
    // Detector carrier at 217.3 Hz (nominal 217), drive recorded with phase 0.5; the detector
    // sees the carrier at phase 0.9, so the relative phase is 0.4 (analytic).
    const fs = 10000;
    const n = 30000;
    const det = new Float64Array(n);
    const drive = new Float64Array(n);
    for (let i = 0; i < n; i++) {
      const t = i / fs;
      det[i] = 1.5 * Math.sin(2 * Math.PI * 217.3 * t + 0.9) + 0.2;
      drive[i] = Math.sin(2 * Math.PI * 217.3 * t + 0.5);
    }
    const q = lockInDemodulate({ values: det, sampleRate: fs, t0: 0 }, { carriersHz: [217], references: [{ values: drive, sampleRate: fs, t0: 0 }] });
    const ch = q.channels[0]!;
    expectAllClose(ch.carrierHz, 217.3, { atol: 1e-6 });
    // Amplitude and phase in the middle: limited by the 15 Hz low-pass ripple of the residual 2f terms.
    expectAllClose(ch.amplitude.values[15000]!, 1.5, { atol: 1e-4 });
    expectAllClose(ch.phase.values[15000]!, 0.4, { atol: 1e-4 });
  });

  it('refuses references given in another order than carriersHz, or a constant drive, instead of demodulating at a wrong frequency', () => {
    // Two sine drives at 217 and 319 Hz, passed swapped. Demodulated at 217 Hz, the 319 Hz drive
    // leaves only low-pass leakage whose phase is no line; before this check the "refined"
    // carriers were ≈ 198 and 338 Hz and the amplitudes 0.12 and 0.06 instead of 2 and 0.7.
    const fs = 10000;
    const d217 = Float64Array.from(x, (_, i) => Math.sin(2 * Math.PI * 217 * (i / fs) + 0.3));
    const d319 = Float64Array.from(x, (_, i) => Math.sin(2 * Math.PI * 319 * (i / fs) + 1.1));
    const u = (v: Float64Array) => ({ values: v, sampleRate: fs, t0: 0 });
    const trace = u(x);
    // The drives in the right order still work: analytic carrier 217 Hz and A1(1 s) = 2, to the
    // 1e-4 the low-pass ripple of the residual 2f terms allows (as in the drive test above).
    const ok = lockInDemodulate(trace, { carriersHz: [217, 319], references: [u(d217), u(d319)] });
    expectAllClose(ok.channels[0]!.carrierHz, 217, { atol: 1e-4 });
    expectAllClose(ok.channels[0]!.amplitude.values[10000]!, 2, { atol: 1e-4 });
    expect(() => lockInDemodulate(trace, { carriersHz: [217, 319], references: [u(d319), u(d217)] })).toThrow(
      expect.objectContaining({ code: 'TF_DEGENERATE_SIGNAL', details: expect.objectContaining({ parameter: 'references[0]', index: 0 }) }),
    );
    // A flat drive (the LED channel not recorded) and an all-zero one.
    expect(() => lockInDemodulate(trace, { carriersHz: [217], references: [u(new Float64Array(x.length).fill(1.5))] })).toThrow(expect.objectContaining({ code: 'TF_DEGENERATE_SIGNAL' }));
    expect(() => lockInDemodulate(trace, { carriersHz: [217], references: [u(new Float64Array(x.length))] })).toThrow(expect.objectContaining({ code: 'TF_DEGENERATE_SIGNAL' }));
  });

  it('rejects carriers at or above Nyquist and NaN samples', () => {
    expect(() => lockInDemodulate({ values: x, sampleRate: 10000, t0: 0 }, { carriersHz: [5000] })).toThrow(expect.objectContaining({ code: 'TF_BAD_OPTION' }));
    const bad = Float64Array.from(x);
    bad[5] = NaN;
    expect(() => lockInDemodulate({ values: bad, sampleRate: 10000, t0: 0 }, { carriersHz: [217] })).toThrow(expect.objectContaining({ code: 'TF_NON_FINITE' }));
  });
});
