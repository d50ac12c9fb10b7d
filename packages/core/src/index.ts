// Errors
export { TuningforkError, ERROR_CODES, isTuningforkError } from './errors.js';
export type { ErrorCode } from './errors.js';

// Options
export {
  resolveOptions, closestKey, formatValue,
  checkFinite, checkPositive, checkNonNegative, checkInteger, checkRange, checkOneOf, checkBoolean,
} from './options.js';

// Randomness
export { Rng, rng } from './rng.js';

// Types and constructors
export type {
  UniformSignal, TimestampedSignal, Matrix, SpikeTrain, PhotometrySite, EventTable, TrialTable,
  Session, PeriEventMatrix, ResultWarning, BarcodeFormat, DeviceClockSpec, DeviceEvents,
} from './types.js';
export { toFloat64, sampleTime, timeToIndex, signalDuration, checkSampleRate, uniformSignal, inferSampleRate, selectKth } from './time.js';
export type { InferSampleRateOptions } from './time.js';
export { makeEventTable, eventTimes, eventValues, eventNames } from './events.js';
export { zerosMatrix, asMatrix, matrixRow } from './matrix.js';

// Provenance
export { VERSION } from './version.js';
export { threadBudget } from './threads.js';
// Low-level: a minimal WebAssembly assembler for numeric kernels (used by stats and encode).
export { wasmApi, WASM_PAGE, uleb, sleb, I32, F64, V128, op, whileLoop, ifElse, kernelModule, compileKernel } from './wasm.js';
export type { WasmMemory, WasmModule, WasmInstance, KernelSpec } from './wasm.js';
export { sha256, sha256Typed, sha256File, sha256FilesInBackground, hashInput, canonicalJson, makeProvenance } from './provenance.js';
export type { Provenance, ProvenanceInput } from './provenance.js';
