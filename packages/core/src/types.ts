/**
 * Shared data types of tuningfork. Times are seconds on one session clock; rates are Hz.
 * Numeric data live in Float64Array (indices in Int32Array/Uint32Array); no per-sample objects.
 */

/** Uniformly sampled signal: the time of values[i] is t0 + i / sampleRate (seconds). */
export interface UniformSignal {
  readonly values: Float64Array;
  /** Hz, finite and > 0. */
  readonly sampleRate: number;
  /** Seconds on the recording clock. */
  readonly t0: number;
}

/** Irregularly sampled signal: timestamps strictly increasing, seconds, same length as values. */
export interface TimestampedSignal {
  readonly values: Float64Array;
  readonly timestamps: Float64Array;
}

/** Row-major matrix: element (r, c) is data[r * cols + c]. */
export interface Matrix {
  readonly data: Float64Array;
  readonly rows: number;
  readonly cols: number;
}

/** Spike times of one sorted unit, seconds, sorted ascending. */
export interface SpikeTrain {
  readonly name: string;
  readonly times: Float64Array;
}

/** One photometry site: a sensor channel and its isosbestic control, on the same clock and grid. */
export interface PhotometrySite {
  readonly name: string;
  /** Ligand-dependent sensor fluorescence (arbitrary units, e.g. volts). */
  readonly signal: UniformSignal;
  /** Isosbestic (ligand-independent) control fluorescence, same grid as `signal`. */
  readonly control: UniformSignal;
}

/**
 * Tidy event table in columnar form: one row per event, sorted by time (ties keep input order).
 * `value` carries a per-event number (e.g. reward size, peak acceleration); NaN when absent.
 */
export interface EventTable {
  readonly time: Float64Array;
  readonly name: readonly string[];
  readonly value: Float64Array;
}

/**
 * Per-trial table of a choice task, columnar. Row k is trial `trial[k]`.
 * `choice` is the chosen option index (0 = left, 1 = right, …) or -1 when no choice was made;
 * `reward` is the outcome (1 reward, 0 omission, NaN when no outcome). Times are NaN when the
 * event did not occur.
 */
export interface TrialTable {
  readonly trial: Int32Array;
  readonly cueTime: Float64Array;
  readonly choiceTime: Float64Array;
  readonly choice: Int32Array;
  readonly outcomeTime: Float64Array;
  readonly reward: Float64Array;
  /** Number of options in the task (2 for left/right). */
  readonly nOptions: number;
}

/** A loaded recording session on one clock. */
/** Barcode format of sync pulses (see align's decodeBarcodes: header pulse, header gap, data cells). */
export interface BarcodeFormat {
  /** Duration of one data cell, seconds. */
  readonly bitSec: number;
  /** Data bits per barcode, 1–52. */
  readonly nBits: number;
  /** Header pulse width, seconds (default 2 · bitSec). */
  readonly headerSec?: number;
  /** Inactive time between header and first cell, seconds (default bitSec). */
  readonly headerGapSec?: number;
  /** Cell order (default 'lsb-first'). */
  readonly bitOrder?: 'lsb-first' | 'msb-first';
}

/** How a device's events are put on the session clock: sync pulses both clocks recorded. */
export interface DeviceClockSpec {
  /** Name of the device's own sync events (its copy of the pulses, on its clock). */
  readonly syncEvent: string;
  /**
   * The session clock's copy of the same pulses: the events of this name in `Session.events`, or
   * the pulses of this continuous channel (a TTL line, thresholded at `threshold`, default the
   * line's mid-level).
   */
  readonly reference: { readonly events: string } | { readonly line: string; readonly threshold?: number };
  /** The pulses are barcodes of this format: the device codes are its sync events' values, the reference codes are decoded from the line (or are the reference events' values). null: plain pulses matched by their intervals. */
  readonly barcodes: BarcodeFormat | null;
}

/** Events a second device logged on its own clock, waiting to be put on the session clock. */
export interface DeviceEvents {
  /** Where they came from (e.g. `files[3] (box.csv)`), for messages and outputs. */
  readonly source: string;
  /** Events on the device's clock, seconds; its sync events are among them. */
  readonly events: EventTable;
  readonly clock: DeviceClockSpec;
}

export interface Session {
  readonly id: string;
  /** Start and end of the recording on the session clock, seconds. */
  readonly start: number;
  readonly end: number;
  readonly photometry: readonly PhotometrySite[];
  readonly units: readonly SpikeTrain[];
  readonly events: EventTable;
  readonly trials?: TrialTable;
  /** Continuous behavioural signals by name (e.g. 'accel' magnitude in g, 'wheel' position). */
  readonly continuous: Readonly<Record<string, UniformSignal>>;
  /** Events of other devices still on their own clocks (the pipeline's first step maps them into `events`). */
  readonly deviceEvents?: readonly DeviceEvents[];
}

/**
 * Shape of a peri-event matrix: one row per kept event, one column per time bin.
 * `offsets[c]` is the time of column c relative to its event (seconds); `kept[r]` indexes the
 * input event of row r.
 */
export interface PeriEventMatrix extends Matrix {
  readonly offsets: Float64Array;
  readonly kept: Uint32Array;
}

/** A warning attached to a result: a documented repair or a caveat, with a stable code. */
export interface ResultWarning {
  readonly code: string;
  readonly message: string;
  readonly details?: Readonly<Record<string, unknown>>;
}
