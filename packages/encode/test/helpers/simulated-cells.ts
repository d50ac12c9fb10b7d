/**
 * Test helper: turn a simulated session into a design and cell signals on one grid.
 *
 * Photometry: both channels averaged into bins, then a simple ΔF/F — the ratio of sensor to
 * isosbestic control over a smooth fitted baseline (`ratioDff`) — which removes bleaching and the
 * multiplicative motion artefact without the full signal pipeline. Units:
 * spike counts per bin. Regressors follow the simulator's truth: outcome kernels with an RPE
 * modulator plus bonus rewards (group 'reward'), movement onsets with a vigour modulator and
 * pre-event support (group 'movement'), choice kernels with an APE modulator (group
 * 'action-prediction').
 */
import type { SimulatedSession } from '@tuningfork/simulate';
import { designMatrix, ridgeRegression } from '../../src/index.js';
import type { CellSignal, EncodingDesign, Regressor } from '../../src/index.js';

export interface SimulatedCells {
  readonly design: EncodingDesign;
  readonly cells: CellSignal[];
  readonly truth: { readonly name: string; readonly class: string; readonly sign: number; readonly kind: 'site' | 'unit' }[];
}

/** Block means of x (rate inRate) into bins of outRate; inRate/outRate must be an integer. */
export function binMeans(x: Float64Array, inRate: number, outRate: number, nBins: number): Float64Array {
  const f = Math.round(inRate / outRate);
  const out = new Float64Array(nBins);
  for (let b = 0; b < nBins; b++) {
    let s = 0;
    for (let i = b * f; i < (b + 1) * f; i++) s += x[i]!;
    out[b] = s / f;
  }
  return out;
}

/**
 * Ratio ΔF/F: r = sensor/control (the multiplicative motion artefact cancels), divided by a smooth
 * baseline, minus 1. The baseline is a least-squares fit of r on a constant and decaying
 * exponentials e^(−t/τ) for τ = 15 s … 1920 s (a ratio of double-exponential bleaching curves is
 * close to such a sum), fitted with a tiny ridge penalty because the exponentials overlap.
 */
export function ratioDff(sig: Float64Array, ctl: Float64Array, binRate: number): Float64Array {
  const n = sig.length;
  const r = Float64Array.from(sig, (v, i) => v / ctl[i]!);
  const taus = [15, 30, 60, 120, 240, 480, 960, 1920];
  const p = taus.length;
  const x = new Float64Array(n * p);
  for (let i = 0; i < n; i++) for (let k = 0; k < p; k++) x[i * p + k] = Math.exp(-i / binRate / taus[k]!);
  const fit = ridgeRegression({ data: x, rows: n, cols: p }, r, { penalty: 1e-6 * n });
  const out = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    let b = fit.intercept;
    for (let k = 0; k < p; k++) b += fit.coefficients[k]! * x[i * p + k]!;
    out[i] = r[i]! / b - 1;
  }
  return out;
}

/** Spike counts in bins [t0 + i/rate − ½/rate, t0 + i/rate + ½/rate). */
export function binCounts(times: Float64Array, rate: number, nBins: number): Float64Array {
  const out = new Float64Array(nBins);
  for (const t of times) {
    const b = Math.floor(t * rate + 0.5);
    if (b >= 0 && b < nBins) out[b] = out[b]! + 1;
  }
  return out;
}

export function simulatedCells(sim: SimulatedSession, binRate = 50): SimulatedCells {
  const { session, truth } = sim;
  const trials = session.trials!;
  const regs: Regressor[] = [
    { name: 'outcome', group: 'reward', times: trials.outcomeTime },
    { name: 'outcome×RPE', group: 'reward', times: trials.outcomeTime, modulator: truth.rpe },
    { name: 'bonus', group: 'reward', times: truth.bonusTimes },
    { name: 'move', group: 'movement', times: truth.movementOnsets, basis: { preSec: 1, nPreBumps: 2, postSec: 2, nBumps: 6 } },
    { name: 'move×vigour', group: 'movement', times: truth.movementOnsets, modulator: truth.movementVigour, basis: { preSec: 1, nPreBumps: 2, postSec: 2, nBumps: 6 } },
    { name: 'choice', group: 'action-prediction', times: trials.choiceTime, basis: { postSec: 2, nBumps: 6 } },
    { name: 'choice×APE', group: 'action-prediction', times: trials.choiceTime, modulator: truth.ape, basis: { postSec: 2, nBumps: 6 } },
  ];
  const design = designMatrix(regs, { startSec: session.start, endSec: session.end, binRate });
  const n = design.nRows;
  const cells: CellSignal[] = [];
  const info: SimulatedCells['truth'] = [];
  session.photometry.forEach((site) => {
    const rate = site.signal.sampleRate;
    const sig = binMeans(site.signal.values, rate, binRate, n);
    const ctl = binMeans(site.control.values, rate, binRate, n);
    cells.push({ name: site.name, values: ratioDff(sig, ctl, binRate), sampleRate: binRate, t0: session.start });
  });
  session.units.forEach((u) => cells.push({ name: u.name, values: binCounts(u.times, binRate, n), sampleRate: binRate, t0: session.start, kind: 'counts' }));
  for (const c of truth.cells) info.push({ name: c.name, class: c.class, sign: c.sign, kind: c.kind });
  return { design, cells, truth: info };
}
