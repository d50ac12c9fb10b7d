// CSV / TSV reading
export { readCsv } from './csv/read-csv.js';
export { parseCsv } from './csv/parse-csv.js';
export type { ParseCsvOptions } from './csv/parse-csv.js';
export { lineOfRow } from './csv/line-of-row.js';
export { CSV_DEFAULTS } from './csv/csv-options.js';
export type { CsvOptions, CsvTable, LineAnchors } from './csv/csv-options.js';

// Convenience readers (CSV/TSV or Arrow)
export { readTrace } from './readers/read-trace.js';
export type { ReadTraceOptions, TraceRead, UniformTrace, TimestampedTrace, NanRun } from './readers/read-trace.js';
export { readEvents } from './readers/read-events.js';
export type { ReadEventsOptions, EventsRead } from './readers/read-events.js';
export { readSpikes } from './readers/read-spikes.js';
export type { ReadSpikesOptions, SpikesRead } from './readers/read-spikes.js';
export { readTrials } from './readers/read-trials.js';
export type { ReadTrialsOptions, TrialsRead, TrialField } from './readers/read-trials.js';
export type { TableFormat, CsvParseSettings } from './internal/read-table.js';

// Arrow IPC
export { readArrow } from './arrow/read-arrow.js';
export { decodeArrow } from './arrow/decode-arrow.js';
export type { ArrowReadOptions, ArrowTable } from './arrow/decode-arrow.js';
export { encodeArrow } from './arrow/encode-arrow.js';
export type { ArrowWriteOptions } from './arrow/encode-arrow.js';
export { writeArrow } from './arrow/write-arrow.js';

// Session manifest
export { validateManifest } from './manifest/validate-manifest.js';
export type { ValidateManifestOptions } from './manifest/validate-manifest.js';
export { readManifest } from './manifest/read-manifest.js';
export { loadSession } from './manifest/load-session.js';
export type { LoadSessionOptions, LoadedSession } from './manifest/load-session.js';
export { MANIFEST_SCHEMA_VERSION } from './manifest/manifest-types.js';
export type {
  SessionManifest, ManifestFile, FileKind, FileFormat, ManifestCsvSettings, ManifestSite,
  PhotometryFileEntry, ContinuousFileEntry, EventsFileEntry, SpikesFileEntry, TrialsFileEntry,
} from './manifest/manifest-types.js';

// Writers (atomic)
export { writeFileAtomic } from './write/write-file-atomic.js';
export type { AtomicData, WriteFileAtomicOptions, WriteResult } from './write/write-file-atomic.js';
export { writeCsv } from './write/write-csv.js';
export { formatCsv, formatCsvChunks, formatNumber } from './write/format-csv.js';
export type { CsvWriteOptions } from './write/format-csv.js';
export { writeJson } from './write/write-json.js';
export type { WriteJsonOptions } from './write/write-json.js';

// Warning codes
export { IO_WARNING_CODES } from './warnings.js';
export type { IoWarningCode } from './warnings.js';

// Tables
export type { ColumnSpec, ColumnTable, ColumnData, NumericColumn } from './table.js';
