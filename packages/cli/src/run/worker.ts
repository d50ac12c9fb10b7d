// Worker-thread entry: analyses the sessions the main thread posts, one at a time.
import { parentPort } from 'node:worker_threads';
import { processSession } from './process-session.js';
import type { SessionJob } from './job-types.js';
import type { WorkerMessage } from './scheduler.js';

const port = parentPort;
if (port === null) throw new Error('worker.js must run in a worker thread');
port.on('message', (msg: { job: SessionJob }) => {
  void processSession(msg.job, (event) => port.postMessage({ type: 'event', event } satisfies WorkerMessage)).then((result) => {
    port.postMessage({ type: 'result', result } satisfies WorkerMessage);
  });
});
