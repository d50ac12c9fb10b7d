import { checkPositive, resolveOptions, toFloat64 } from '@tuningfork/core';
import type { ResultWarning, UniformSignal } from '@tuningfork/core';
import { examine, nextAbove, peakOf, resolveRule } from '../internal/onset-scan.js';
import { snap } from '../internal/interp.js';
import { checkEventTimes, checkNumberArray, checkSignal } from '../internal/validate.js';
import { ONSET_DEFAULTS } from './movement-onsets.js';
import type { MovementOnsetOptions } from './movement-onsets.js';

/** Why an event has no movement onset. */
export type FirstMovementStatus = 'ok' | 'no-quiescence' | 'no-movement' | 'outside-recording' | 'missing-time';

/** Options of {@link firstMovementAfter}: the onset rule plus the search window. */
export interface FirstMovementOptions extends MovementOnsetOptions {
  /** Search for the crossing from the event to this many seconds after it. @defaultValue 2 */
  maxLatencySec?: number;
}

/** Result of {@link firstMovementAfter}: one entry per event (NaN when there is no onset). */
export interface FirstMovementResult {
  readonly onsets: Float64Array;
  readonly crossings: Float64Array;
  /** Onset − event, seconds. */
  readonly latencies: Float64Array;
  readonly vigour: Float64Array;
  readonly status: readonly FirstMovementStatus[];
  readonly thresholds: { readonly on: number; readonly off: number; readonly baseline: number };
  readonly warnings: readonly ResultWarning[];
}

const DEFAULTS = Object.freeze({ ...ONSET_DEFAULTS, maxLatencySec: 2 });

/**
 * First movement onset after each reference event (e.g. each cue), with the rule of
 * movementOnsets: the first sample from the event on whose activity exceeds `on` and stays above
 * `off` for `holdSec`, within `maxLatencySec`; it must be preceded by `quietSec` of stillness
 * (the window may reach before the event), and the rise (from the last sample below `off`) must
 * begin at or after the event, so an animal already moving at the event has no onset. No onset gives NaN and a status: 'no-quiescence' (the
 * animal was already moving), 'no-movement' (no crossing that held), 'outside-recording',
 * 'missing-time' (NaN event).
 *
 * @param signal - Uniform movement signal.
 * @param events - Reference event times, seconds, strictly increasing among finite values.
 * @returns `{ onsets, crossings, latencies, vigour, status, thresholds, warnings }`, one entry per event.
 * @throws {TuningforkError} TF_BAD_EVENTS (unsorted, duplicate or infinite events) and the codes of movementOnsets.
 */
export function firstMovementAfter(signal: UniformSignal, events: ArrayLike<number>, options: FirstMovementOptions = {}): FirstMovementResult {
  const fn = 'firstMovementAfter';
  const o = resolveOptions(fn, DEFAULTS, options);
  checkSignal(fn, 'signal', signal, 1);
  const maxLat = checkPositive(fn, 'maxLatencySec', o.maxLatencySec);
  const ev = toFloat64(checkNumberArray(fn, 'events', events));
  checkEventTimes(fn, 'events', ev, true);
  const { a, rule } = resolveRule(fn, signal, o);
  const rate = signal.sampleRate;
  const n = a.length;
  const m = ev.length;
  const onsets = new Float64Array(m).fill(NaN);
  const crossings = new Float64Array(m).fill(NaN);
  const latencies = new Float64Array(m).fill(NaN);
  const vigour = new Float64Array(m).fill(NaN);
  const status: FirstMovementStatus[] = [];
  for (let e = 0; e < m; e++) {
    const te = ev[e]!;
    if (te !== te) {
      status.push('missing-time');
      continue;
    }
    const from = Math.ceil(snap((te - signal.t0) * rate));
    const to = Math.min(n, Math.floor(snap((te + maxLat - signal.t0) * rate)) + 1);
    if (from < 0 || from >= n) {
      status.push('outside-recording');
      continue;
    }
    let s: FirstMovementStatus = 'no-movement';
    for (let i = from; i < to;) {
      const c = nextAbove(a, i, to, rule.on);
      if (c < 0) break;
      const x = examine(a, c, rule);
      if (x.status === 'no-hold') {
        i = c + 1;
        continue;
      }
      // The rise must begin at or after the event: moving at the event is not quiescence.
      if (x.status === 'no-quiescence' || x.riseStart < from - 1) {
        s = 'no-quiescence';
        break;
      }
      const [v] = peakOf(a, x.onset, x.end);
      onsets[e] = signal.t0 + x.onset / rate;
      crossings[e] = signal.t0 + c / rate;
      latencies[e] = onsets[e]! - te;
      vigour[e] = v;
      s = 'ok';
      break;
    }
    status.push(s);
  }
  const warnings: ResultWarning[] = [];
  const counts: Record<string, number> = {};
  for (const s of status) if (s !== 'ok') counts[s] = (counts[s] ?? 0) + 1;
  const nBad = Object.values(counts).reduce((p, q) => p + q, 0);
  if (nBad > 0) warnings.push({ code: 'events-without-onset', message: `${fn}: ${nBad} event(s) have no onset (${Object.entries(counts).map(([k, v]) => `${v} ${k}`).join(', ')}); their entries are NaN.`, details: counts });
  return { onsets, crossings, latencies, vigour, status, thresholds: { on: rule.on, off: rule.off, baseline: rule.baselineValue }, warnings };
}
