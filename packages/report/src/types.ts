/**
 * Input shapes of the report package: plain data, produced by the analysis stages (or by hand).
 * Times are seconds, rates Hz. Every string here is user-supplied text and is escaped on output.
 */
import type { Matrix, Provenance, ResultWarning, UniformSignal } from '@tuningfork/core';
import type { Run } from './primitives/marks.js';

/** A power spectrum: frequencies ascending (Hz) and power (unit²/Hz), same length. */
export interface SpectrumInput {
  readonly frequencies: Float64Array;
  readonly power: Float64Array;
  /** Unit of power, e.g. 'V²/Hz' or '(ΔF/F)²/Hz'. @defaultValue 'a.u.²/Hz' */
  readonly unit?: string;
}

/** Quality-control data of one photometry site. */
export interface QcInput {
  /** Site or channel name. */
  readonly site: string;
  /** Raw sensor signal. */
  readonly raw: UniformSignal;
  /** Control fitted to the sensor (same units and grid as `raw`). */
  readonly fittedControl: UniformSignal;
  /** Corrected trace. */
  readonly dff: UniformSignal;
  /** Power spectrum of the corrected (or raw) trace. */
  readonly spectrum: SpectrumInput;
  /** Unit of raw and fitted control. @defaultValue 'a.u.' */
  readonly rawUnit?: string;
  /** Name of the corrected quantity. @defaultValue 'ΔF/F' */
  readonly dffLabel?: string;
  /** Unit of the corrected quantity ('' for a plain fraction, '%' when the values are percent). @defaultValue '' */
  readonly dffUnit?: string;
  /** Named QC numbers shown in the report's QC table (formatted, never recomputed). */
  readonly metrics?: Readonly<Record<string, number>>;
}

/** One condition of a peri-event average: mean with its interval and significant runs. */
export interface ResponseCondition {
  /** Condition label, e.g. 'rewarded'. */
  readonly label: string;
  /** Time of each point relative to the event, s (increasing). */
  readonly times: Float64Array;
  readonly mean: Float64Array;
  /** Lower and upper bounds of the interval (e.g. bootstrap CI), same length as times. */
  readonly low: Float64Array;
  readonly high: Float64Array;
  /** Significant time windows, s relative to the event. */
  readonly runs?: readonly Run[];
  /** Number of trials averaged. */
  readonly n?: number;
}

/** A peri-event response of one site or unit to one event, several conditions overlaid. */
export interface ResponseInput {
  /** Site or unit name. */
  readonly cell: string;
  /** Event name, e.g. 'outcome'. */
  readonly event: string;
  /** Name of the plotted quantity. @defaultValue 'ΔF/F' */
  readonly valueLabel?: string;
  /** Unit of the plotted quantity. @defaultValue '' */
  readonly unit?: string;
  /** Interval level, e.g. 0.95 (shown in the legend). */
  readonly level?: number;
  readonly conditions: readonly ResponseCondition[];
}

/** A per-trial variable used to order rows (e.g. RPE, APE, latency). */
export interface SortKey {
  readonly label: string;
  /** One value per row; NaN rows go last. */
  readonly values: Float64Array;
  readonly unit?: string;
}

/** Trials × time matrix of one site or unit around one event, to be drawn sorted. */
export interface TrialHeatmapInput {
  readonly cell: string;
  readonly event: string;
  /** rows = trials, cols = time points. */
  readonly matrix: Matrix;
  /** Time of each column relative to the event, s (increasing, uniform). */
  readonly times: Float64Array;
  /** Row order key. */
  readonly sortBy: SortKey;
  /** @defaultValue 'ΔF/F' */
  readonly valueLabel?: string;
  /** @defaultValue '' */
  readonly unit?: string;
  /** Signed data gets the diverging map centred on 0. @defaultValue true when the data has both signs */
  readonly signed?: boolean;
}

/** Spike raster of one unit around one event, with its PETH. */
export interface RasterInput {
  readonly unit: string;
  readonly event: string;
  /** Window shown, s relative to the event: [start, end]. */
  readonly window: readonly [number, number];
  /** Spike times relative to the event, one array per trial (in display order unless sortBy). */
  readonly trials: readonly Float64Array[];
  /** Peri-event time histogram: bin centres (s) and rate (Hz), optional interval. */
  readonly peth: {
    readonly times: Float64Array;
    readonly rate: Float64Array;
    readonly low?: Float64Array;
    readonly high?: Float64Array;
  };
  /** Optional row order key (one value per trial). */
  readonly sortBy?: SortKey;
}

/** One fitted kernel with its interval. */
export interface KernelCurve {
  readonly label: string;
  /** Lag of each coefficient, s. */
  readonly lags: Float64Array;
  readonly estimate: Float64Array;
  readonly low: Float64Array;
  readonly high: Float64Array;
}

/** Kernels of one variable group (e.g. 'reward'). */
export interface KernelGroup {
  readonly group: string;
  readonly kernels: readonly KernelCurve[];
}

/** All fitted kernels of one site or unit. */
export interface KernelInput {
  readonly cell: string;
  readonly groups: readonly KernelGroup[];
  /** @defaultValue 'Weight' */
  readonly valueLabel?: string;
  /** @defaultValue '' */
  readonly unit?: string;
}

/** Where one cell falls between reward and movement. */
export interface TuningCell {
  readonly cell: string;
  /** 'site' or 'unit' (free text allowed). */
  readonly kind?: string;
  /** Session id (batch reports). */
  readonly session?: string;
  /** Unique explained variance of the reward group, ΔR² (fraction). */
  readonly rewardUnique: number;
  /** Unique explained variance of the movement group, ΔR² (fraction). */
  readonly movementUnique: number;
  /** Class name (see CLASS_STYLES; others get fallback styles). */
  readonly class: string;
  /** Sign of the dominant response: +1, −1, or 0 when none. */
  readonly sign: number;
}

/** Number of cells in a class. */
export interface ClassCount {
  readonly class: string;
  readonly count: number;
}

/** Cells and counts of a tuning summary. */
export interface TuningInput {
  readonly cells: readonly TuningCell[];
  /** Counts per class as computed upstream; when absent the figure is omitted. */
  readonly counts?: readonly ClassCount[];
}

/** A column of a report table. */
export interface ReportColumn {
  /** Key into each row. */
  readonly key: string;
  /** Header text. */
  readonly label: string;
  readonly unit?: string;
  /** @defaultValue 'text' for string cells, 'number' for numbers */
  readonly type?: 'number' | 'text';
  /** Decimals for numbers (else 3 significant digits). */
  readonly decimals?: number;
}

/** A sortable table in a report. */
export interface ReportTable {
  readonly caption: string;
  readonly columns: readonly ReportColumn[];
  readonly rows: readonly Readonly<Record<string, string | number>>[];
}

/** Everything one session report shows. Absent sections are omitted. */
export interface SessionReportInput {
  /** Session id. */
  readonly session: string;
  /** Page title. @defaultValue 'tuningfork report — <session>' */
  readonly title?: string;
  /** Source files, shown in the header and provenance. */
  readonly files?: readonly string[];
  readonly qc?: readonly QcInput[];
  readonly responses?: readonly ResponseInput[];
  readonly heatmaps?: readonly TrialHeatmapInput[];
  readonly rasters?: readonly RasterInput[];
  readonly kernels?: readonly KernelInput[];
  readonly tuning?: TuningInput;
  /** Extra tables, shown after the model section. */
  readonly tables?: readonly ReportTable[];
  readonly warnings?: readonly ResultWarning[];
  readonly provenance: Provenance | readonly Provenance[];
}

/** One session's line in a batch report. */
export interface BatchSession {
  readonly session: string;
  /** Relative link to the session's report (no scheme; anything else is shown as text). */
  readonly href?: string;
  readonly sites?: number;
  readonly units?: number;
  readonly trials?: number;
  readonly warnings?: number;
}

/** Everything a batch report shows. */
export interface BatchReportInput {
  /** @defaultValue 'tuningfork batch report' */
  readonly title?: string;
  readonly sessions: readonly BatchSession[];
  /** All cells of all sessions (with `session` set). */
  readonly cells: readonly TuningCell[];
  readonly counts?: readonly ClassCount[];
  readonly tables?: readonly ReportTable[];
  readonly warnings?: readonly ResultWarning[];
  readonly provenance: Provenance | readonly Provenance[];
}
