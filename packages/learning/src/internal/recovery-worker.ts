// Worker-thread entry of the recovery runner: computes agents [from, to) and posts their results.
import { parentPort, workerData } from 'node:worker_threads';
import { runAgent } from './recovery-agents.js';
import type { AgentResult, RecoveryTask } from './recovery-agents.js';

const { task, from, to } = workerData as { task: RecoveryTask; from: number; to: number };
const out: AgentResult[] = [];
for (let i = from; i < to; i++) out.push(runAgent(task, i));
parentPort!.postMessage(out);
