/**
 * tuningfork — umbrella package. Re-exports each pipeline stage under its own name, so one
 * import gives the whole library (`import { signal, align } from 'tuningfork'`), plus the session
 * pipeline that runs the stages end to end.
 */
import * as core from '@tuningfork/core';
import * as io from '@tuningfork/io';
import * as signal from '@tuningfork/signal';
import * as align from '@tuningfork/align';
import * as stats from '@tuningfork/stats';
import * as learning from '@tuningfork/learning';
import * as encode from '@tuningfork/encode';
import * as simulate from '@tuningfork/simulate';
import * as report from '@tuningfork/report';

export { core, io, signal, align, stats, learning, encode, simulate, report };

// The session pipeline
export { analyzeSession, DEFAULT_RESPONSES, BAND_ASSUMPTIONS } from './analyze-session.js';
export { syncDeviceEvents } from './sync-device-events.js';
export type { DeviceClockResult, SyncDeviceEventsOptions, SyncDeviceEventsResult } from './sync-device-events.js';
export type {
  AnalyzeSessionOptions, AnalyzeHooks, SessionAnalysis, SiteResult, ResponseResult, ResponseSpec, PeriEventStepOptions, EncodeStepOptions,
} from './analyze-session.js';
export { trialsFromEvents, EVENT_NAMES } from './internal/trials.js';
export type { ColumnTable, ProgressCallback, SessionOutputs } from './pipeline-types.js';
