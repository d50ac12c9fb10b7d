import type { ResultWarning } from '@tuningfork/core';

/** Pulses as sample indices: active from start[k] (first active sample) to end[k] (first inactive sample, n if open). */
export interface IndexPulses {
  start: Int32Array;
  end: Int32Array;
  /** Bit 1: active at the first sample (began before the record); bit 2: active at the last sample. */
  open: Uint8Array;
}

/**
 * Debounce in the documented order: merge pulses whose inactive gap (start[k+1] − end[k]) is
 * shorter than `minGap` samples, then drop pulses shorter than `minWidth` samples. Open pulses
 * are never dropped for width (their width is only a lower bound).
 */
export function debounce(p: IndexPulses, minGap: number, minWidth: number): { pulses: IndexPulses; nMerged: number; nDropped: number } {
  const n = p.start.length;
  const s: number[] = [];
  const e: number[] = [];
  const o: number[] = [];
  let nMerged = 0;
  for (let k = 0; k < n; k++) {
    const last = s.length - 1;
    if (last >= 0 && p.start[k]! - e[last]! < minGap) {
      e[last] = p.end[k]!;
      o[last] = o[last]! | (p.open[k]! & 2);
      nMerged++;
    } else {
      s.push(p.start[k]!);
      e.push(p.end[k]!);
      o.push(p.open[k]!);
    }
  }
  const keep: number[] = [];
  for (let k = 0; k < s.length; k++) if (o[k] !== 0 || e[k]! - s[k]! >= minWidth) keep.push(k);
  return {
    pulses: {
      start: Int32Array.from(keep, (k) => s[k]!),
      end: Int32Array.from(keep, (k) => e[k]!),
      open: Uint8Array.from(keep, (k) => o[k]!),
    },
    nMerged,
    nDropped: s.length - keep.length,
  };
}

/** Samples equivalent to a duration, with a guard against float noise (0.002 s at 1 kHz is 2 samples). */
export function secToSamples(sec: number, rate: number): number {
  const v = sec * rate;
  const r = Math.round(v);
  return Math.abs(v - r) < 1e-9 * Math.max(1, Math.abs(v)) ? r : v;
}

/** Common tail of the edge detectors: drop or keep open pulses and build warnings. */
export function finishOpen(p: IndexPulses, policy: 'flag' | 'drop', fn: string, warnings: ResultWarning[]): IndexPulses {
  let nOpen = 0;
  for (let k = 0; k < p.open.length; k++) if (p.open[k] !== 0) nOpen++;
  if (nOpen === 0) return p;
  if (policy === 'flag') {
    warnings.push({ code: 'open-pulses', message: `${fn}: ${nOpen} pulse(s) were already active at the start or still active at the end of the record; they are kept and flagged in 'open' (their width is a lower bound).`, details: { pulses: nOpen } });
    return p;
  }
  const keep: number[] = [];
  for (let k = 0; k < p.open.length; k++) if (p.open[k] === 0) keep.push(k);
  warnings.push({ code: 'open-pulses-dropped', message: `${fn}: ${nOpen} pulse(s) open at the record ends were dropped (openPulses: 'drop').`, details: { pulses: nOpen } });
  return {
    start: Int32Array.from(keep, (k) => p.start[k]!),
    end: Int32Array.from(keep, (k) => p.end[k]!),
    open: Uint8Array.from(keep, (k) => p.open[k]!),
  };
}
