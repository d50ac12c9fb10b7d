// TTL edges
export { digitalEdges } from './edges/digital-edges.js';
export type { DigitalEdgesOptions, EdgeResult } from './edges/digital-edges.js';
export { analogEdges } from './edges/analog-edges.js';
export type { AnalogEdgesOptions } from './edges/analog-edges.js';
export { decodeBarcodes } from './edges/decode-barcodes.js';
export type { BarcodePulses, BarcodeRejection, DecodeBarcodesOptions, DecodeBarcodesResult } from './edges/decode-barcodes.js';

// Clock synchronisation
export { fitClockMap } from './clock/fit-clock-map.js';
export type { ClockMap, ClockPiece, FitClockMapOptions } from './clock/fit-clock-map.js';
export { mapDeviceTimes } from './clock/map-device-times.js';
export type { MapDeviceTimesOptions } from './clock/map-device-times.js';

// Movement and licks
export { wheelVelocity } from './movement/wheel-velocity.js';
export type { WheelVelocityOptions } from './movement/wheel-velocity.js';
export { movementOnsets } from './movement/movement-onsets.js';
export type { MovementOnsetOptions, MovementOnsetsResult } from './movement/movement-onsets.js';
export { firstMovementAfter } from './movement/first-movement-after.js';
export type { FirstMovementOptions, FirstMovementResult, FirstMovementStatus } from './movement/first-movement-after.js';
export { lickBouts } from './licks/lick-bouts.js';
export type { LickBoutsOptions, LickBoutsResult } from './licks/lick-bouts.js';

// Peri-event matrices
export { periEventMatrix } from './peri/peri-event-matrix.js';
export type { PeriEventOptions, PeriEventResult, PeriExclusions, PeriExclusionReason } from './peri/peri-event-matrix.js';
export { periEventCounts } from './peri/peri-event-counts.js';
export type { PeriEventCountsOptions } from './peri/peri-event-counts.js';

// Time warping
export { warpTime } from './warp/warp-time.js';
export { warpTrials } from './warp/warp-trials.js';
export type { WarpTrialsOptions, WarpTrialsResult, WarpExclusionReason } from './warp/warp-trials.js';

// Event tables (arquero)
export { eventsToTable, trialsToTable } from './tables/events-to-table.js';
export type { ArqueroTable, TrialOutcome } from './tables/events-to-table.js';
export { assignTrials } from './tables/assign-trials.js';
export type { AssignTrialsOptions } from './tables/assign-trials.js';
export { outcomeTable } from './tables/outcome-table.js';
export type { OutcomeTableOptions, OutcomeType } from './tables/outcome-table.js';
export { selectRows, columnTimes } from './tables/select-rows.js';
export type { CellValue, ColumnCondition } from './tables/select-rows.js';
