import type { Provenance, ResultWarning } from '@tuningfork/core';

/** A tidy table in columnar form (equal-length columns), ready to write as Arrow IPC or CSV. */
export interface ColumnTable {
  readonly columns: Readonly<Record<string, Float64Array | Int32Array | readonly string[]>>;
  readonly rows: number;
}

/** Progress of a long computation: step name and completed fraction of that step in [0, 1]. */
export type ProgressCallback = (step: string, fraction: number) => void;

/**
 * What a session analysis writes: tidy tables (one per name, e.g. 'classes', 'trials', 'peri_event',
 * 'traces') and text files (e.g. 'report.html', 'figures/peth_site01.svg'), plus provenance.
 * Writers (cli) put each table as `<name>.arrow` and `<name>.csv`, and each text under its name.
 */
export interface SessionOutputs {
  readonly sessionId: string;
  readonly tables: Readonly<Record<string, ColumnTable>>;
  readonly texts: Readonly<Record<string, string>>;
  readonly provenance: Provenance;
  readonly warnings: readonly ResultWarning[];
}
