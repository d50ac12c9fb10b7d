// Session simulator
export { simulateSession, bleachCurve } from './simulate-session.js';
export { SIMULATE_DEFAULTS, CELL_CLASSES } from './defaults.js';
export type {
  SimulateOptions, SimulatedSession, SimulationTruth, CellTruth, CellClass, BleachParams, TruthKernels,
} from './types.js';

// Task structure and kernels (exposed so analyses can state what they should recover)
export { TASK_TIMING, MOVEMENT_QUIET_SEC, agentPolicy, agentUpdate } from './task.js';
export type { AgentState, AgentParams } from './task.js';
export { rewardKernel, movementKernel, apeKernel, KERNEL_SUPPORT } from './kernels.js';

// Writers
export { writePeerLayout } from './peer-layout.js';
export type { PeerLayoutOptions } from './peer-layout.js';
