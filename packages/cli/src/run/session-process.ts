// Child-process entry of `--jobs N` (N > 1): analyses the sessions the parent sends over IPC, one
// at a time, and sends back their events and results.
import { rmSync } from 'node:fs';
import { setPublishGuard } from '../output/staging.js';
import { processSession } from './process-session.js';
import type { SessionJob } from './job-types.js';
import type { SessionMessage } from './scheduler.js';

const send = process.send?.bind(process);
if (send === undefined) throw new Error('session-process.js must run as a child started with an IPC channel');

// A parent killed outright (SIGKILL) cannot stop its children. A child notices by being re-parented
// (process.ppid is read from the OS each time) and stops before the next progress event or, removing
// the staged folder, before it publishes a session, so a killed run never gains a session after it
// died. Staging folders carry the parent's pid, so the next run also removes anything left behind.
const parent = process.ppid;
const stopIfOrphaned = (): void => {
  if (process.ppid !== parent) process.exit(1);
};
setPublishGuard((stage) => {
  if (process.ppid === parent) return;
  rmSync(stage, { recursive: true, force: true });
  process.exit(1);
});
process.on('disconnect', () => process.exit(0));
process.on('message', (msg: { job: SessionJob }) => {
  void processSession(msg.job, (event) => {
    stopIfOrphaned();
    send({ type: 'event', event } satisfies SessionMessage);
  }).then((result) => {
    stopIfOrphaned();
    send({ type: 'result', result } satisfies SessionMessage);
  });
});
