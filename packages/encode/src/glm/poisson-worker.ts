// Worker-thread entry of poissonGLMCV: fits its share of the call's units (original indices given) and
// posts the fits (or the error met) through its port, then sets the shared flag the caller waits on.
import { workerData } from 'node:worker_threads';
import { TuningforkError } from '@tuningfork/core';
import { fitUnit } from './poisson-unit.js';
import { FLAG_DONE, FLAG_FAILED, FLAG_STARTED } from './poisson-threads.js';
import type { GlmWorkerData, GlmWorkerReply } from './poisson-threads.js';

const { ctx, units, indices, port, flag } = workerData as GlmWorkerData;
Atomics.store(flag, 0, FLAG_STARTED);
Atomics.notify(flag, 0);
let reply: GlmWorkerReply;
let state = FLAG_DONE;
try {
  reply = { fits: units.map((u, i) => fitUnit(ctx, u, indices[i]!)) };
} catch (e) {
  state = FLAG_FAILED;
  reply = { error: e instanceof TuningforkError ? { code: e.code, message: e.message, details: e.details } : { message: e instanceof Error ? e.message : String(e) } };
}
port.postMessage(reply);
Atomics.store(flag, 0, state);
Atomics.notify(flag, 0);
