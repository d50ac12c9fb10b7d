import type { EventTable, Session, UniformSignal } from '@tuningfork/core';

/** True tuning class of a simulated site or unit. */
export type CellClass = 'reward' | 'movement' | 'mixed' | 'action-prediction' | 'none';

/** Options of simulateSession. Every option is validated; unknown keys throw TF_UNKNOWN_OPTION. */
export interface SimulateOptions {
  /** Session length, seconds. @defaultValue 600 */
  durationSec?: number;
  /** Raw photometry sample rate, Hz (1–1000). @defaultValue 1000 */
  photometryRate?: number;
  /** Number of photometry sites (each a sensor + isosbestic control pair). @defaultValue 4 */
  nSites?: number;
  /** Number of sorted units. @defaultValue 10 */
  nUnits?: number;
  /**
   * Classes assigned to sites, cycled in order ('reward', 'movement', …). @defaultValue
   * ['reward', 'movement', 'mixed', 'action-prediction', 'none']
   */
  siteClasses?: readonly CellClass[];
  /** Classes assigned to units, cycled in order. @defaultValue same as siteClasses */
  unitClasses?: readonly CellClass[];
  /** Peak ΔF/F of a full-size response (RPE = 1, unit vigour), fraction. @defaultValue 0.03 */
  responseDff?: number;
  /** Standard deviation of white shot-like measurement noise, as a fraction of F at the raw rate. @defaultValue 0.003 */
  shotNoise?: number;
  /** Standard deviation of slow biological background ΔF/F (AR(1), 1 s time constant). @defaultValue 0.003 */
  backgroundDff?: number;
  /** Fractional size (mean) of shared motion artefacts. @defaultValue 0.05 */
  artefactSize?: number;
  /** Rate of motion artefacts at random times, independent of behaviour, per second. @defaultValue 0.03 */
  artefactRate?: number;
  /**
   * Fraction of movement bouts that also shake the fiber (an artefact during the bout). Artefacts
   * tied to movement are the realistic hard case: a control fit then absorbs part of any real
   * movement response. @defaultValue 0
   */
  artefactAtMovement?: number;
  /** Block length range, trials [min, max] (uniform integer). @defaultValue [30, 60] */
  blockTrials?: readonly [number, number];
  /** Reward probabilities of the better and worse port. @defaultValue [0.8, 0.2] */
  rewardProbs?: readonly [number, number];
  /** Rate of unannounced bonus rewards during the inter-trial interval, per second. @defaultValue 0.03 */
  bonusRate?: number;
  /** Rate of spontaneous movement bouts, per second (in addition to one at each choice). @defaultValue 0.08 */
  movementRate?: number;
  /** Accelerometer sample rate, Hz. @defaultValue 100 */
  accelRate?: number;
  /** Agent parameters (Q-learning + choice kernel): learning rate α. @defaultValue 0.3 */
  alpha?: number;
  /** Agent inverse temperature on Q, β. @defaultValue 2.5 */
  beta?: number;
  /** Agent choice-kernel learning rate α_C. @defaultValue 0.3 */
  alphaC?: number;
  /** Agent choice-kernel weight β_C. @defaultValue 2.5 */
  betaC?: number;
  /** Baseline firing rate range of units, Hz. @defaultValue [4, 12] */
  unitBaseRate?: readonly [number, number];
  /** Peak rate change of a full-size unit response, Hz. @defaultValue 15 */
  unitResponseHz?: number;
  /** Absolute refractory period of units, seconds (0 = plain Poisson). @defaultValue 0.002 */
  refractorySec?: number;
  /** Behaviour-device clock: offset (s) and drift (ppm) relative to the session clock. @defaultValue 3.25 */
  deviceOffsetSec?: number;
  /** @defaultValue 40 */
  deviceDriftPpm?: number;
  /** Fraction of sync pulses lost on each side (independently). @defaultValue 0.02 */
  syncDropFraction?: number;
  /** Seed of every random draw. @defaultValue 1 */
  seed?: number;
}

/** Double-exponential bleaching a·e^(−t/τ1) + b·e^(−t/τ2) + c (t from session start, s). */
export interface BleachParams {
  readonly a: number;
  readonly tau1: number;
  readonly b: number;
  readonly tau2: number;
  readonly c: number;
}

/** Truth about one simulated cell (site or unit). */
export interface CellTruth {
  readonly name: string;
  readonly kind: 'site' | 'unit';
  readonly class: CellClass;
  /** +1 excitatory, −1 inhibitory response (sign of the dominant kernel). */
  readonly sign: 1 | -1;
  /** Gains applied to the unit-size kernels (0 when the cell does not carry that variable). */
  readonly gainReward: number;
  readonly gainMovement: number;
  readonly gainApe: number;
  /** Units: baseline rate, Hz. Sites: NaN. */
  readonly baseRate: number;
}

/** Kernels of unit size on a common lag grid (seconds relative to the event). */
export interface TruthKernels {
  readonly lags: Float64Array;
  /** Outcome-locked response per unit RPE (also used for bonus rewards with RPE = 1). */
  readonly reward: Float64Array;
  /** Movement-onset-locked response per unit vigour (starts before onset). */
  readonly movement: Float64Array;
  /** Choice-locked response per unit APE. */
  readonly ape: Float64Array;
}

/** Everything the simulator knows that an analysis must recover. */
export interface SimulationTruth {
  readonly cells: readonly CellTruth[];
  readonly kernels: TruthKernels;
  readonly agent: { readonly alpha: number; readonly beta: number; readonly alphaC: number; readonly betaC: number; readonly q0: 0; readonly c0: 0 };
  /** Per trial (same rows as session.trials): RPE = r − Q(chosen) before update; APE = 1 − C(chosen) before update. */
  readonly rpe: Float64Array;
  readonly ape: Float64Array;
  readonly qChosen: Float64Array;
  readonly cChosen: Float64Array;
  /** Model probability of the choice made. */
  readonly pChoice: Float64Array;
  /** Reward probability of each port per trial: [trial * 2 + port]. */
  readonly pReward: Float64Array;
  /** Trial index where each block starts. */
  readonly blockStarts: Int32Array;
  /** Movement bouts: onset (s), vigour (peak acceleration above gravity, g), 1 if tied to a choice. */
  readonly movementOnsets: Float64Array;
  readonly movementVigour: Float64Array;
  readonly movementAtChoice: Uint8Array;
  /** Bonus reward times (s). */
  readonly bonusTimes: Float64Array;
  /** True ΔF/F (neural component, fraction) per site at the photometry rate. */
  readonly dff: readonly Float64Array[];
  /** Shared fractional motion artefact at the photometry rate (0 = none; negative dips). */
  readonly artefact: Float64Array;
  /** Bleaching of each site's sensor and control channels. */
  readonly bleaching: readonly { readonly signal: BleachParams; readonly control: BleachParams }[];
  /** Device clock: deviceTime = offsetSec + (1 + driftPpm·1e−6)·sessionTime. */
  readonly clock: { readonly offsetSec: number; readonly driftPpm: number };
}

/** A simulated session: the data a lab would record, and the truth behind it. */
export interface SimulatedSession {
  /** Photometry, units, accelerometer ('accel', g), events and trials on the session clock. */
  readonly session: Session;
  /** What the behaviour device logged, on its own clock (events and its copy of the sync pulses). */
  readonly device: { readonly events: EventTable; readonly syncPulses: Float64Array };
  /** Sync pulses as the acquisition system recorded them: times (session clock) and the digital line at the photometry rate. */
  readonly sync: { readonly pulses: Float64Array; readonly line: UniformSignal };
  readonly truth: SimulationTruth;
  /** Resolved options (defaults filled in). */
  readonly options: Required<SimulateOptions>;
}
