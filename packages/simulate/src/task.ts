import type { Rng } from '@tuningfork/core';
import type { SimulateOptions } from './types.js';

/** Timing constants of the demo operant task (seconds). */
export const TASK_TIMING = Object.freeze({
  /** First cue no earlier than this. */
  firstCueSec: 5,
  /** Minimum cue → choice latency; the rest is gamma(2, 0.25 s). */
  minLatencySec: 0.4,
  /** Choice (port entry) → outcome (sucrose drop or omission tone-free timeout). */
  outcomeDelaySec: 0.5,
  /** Inter-trial interval after the outcome: minimum + exponential(mean). */
  itiMinSec: 3,
  itiMeanExtraSec: 3,
  /** Bonus rewards keep this distance from outcomes and cues. */
  bonusGuardSec: 2,
  /** Last outcome at least this long before the end of the session. */
  tailSec: 5,
});

/** Agent state: action values Q and choice-kernel (habit) strengths C, one entry per option. */
export interface AgentState {
  readonly q: Float64Array;
  readonly c: Float64Array;
}

/** Agent parameters: α, β (on Q), α_C and β_C (on the choice kernel C). */
export interface AgentParams {
  readonly alpha: number;
  readonly beta: number;
  readonly alphaC: number;
  readonly betaC: number;
}

/** Softmax choice probabilities P(a) ∝ exp(β·Q(a) + β_C·C(a)), computed stably (max subtracted). */
export function agentPolicy(state: AgentState, p: AgentParams, out = new Float64Array(state.q.length)): Float64Array {
  let m = -Infinity;
  for (let a = 0; a < out.length; a++) {
    out[a] = p.beta * state.q[a]! + p.betaC * state.c[a]!;
    if (out[a]! > m) m = out[a]!;
  }
  let z = 0;
  for (let a = 0; a < out.length; a++) { out[a] = Math.exp(out[a]! - m); z += out[a]!; }
  for (let a = 0; a < out.length; a++) out[a] = out[a]! / z;
  return out;
}

/**
 * Update the agent after choosing `choice` and receiving `reward`; returns the pre-update RPE
 * (r − Q(c)) and APE (1 − C(c)). Q(c) += α·RPE (unchosen values unchanged);
 * C(a) += α_C·(1{a = c} − C(a)) for every option.
 */
export function agentUpdate(state: AgentState, p: AgentParams, choice: number, reward: number): { rpe: number; ape: number } {
  const rpe = reward - state.q[choice]!;
  const ape = 1 - state.c[choice]!;
  state.q[choice] = state.q[choice]! + p.alpha * rpe;
  for (let a = 0; a < state.c.length; a++) state.c[a] = state.c[a]! + p.alphaC * ((a === choice ? 1 : 0) - state.c[a]!);
  return { rpe, ape };
}

/** The behaviour of one simulated session on the session clock. */
export interface TaskRun {
  readonly cueTime: Float64Array;
  readonly choiceTime: Float64Array;
  readonly choice: Int32Array;
  readonly outcomeTime: Float64Array;
  readonly reward: Float64Array;
  readonly rpe: Float64Array;
  readonly ape: Float64Array;
  readonly qChosen: Float64Array;
  readonly cChosen: Float64Array;
  readonly pChoice: Float64Array;
  readonly pReward: Float64Array;
  readonly blockStarts: Int32Array;
  readonly bonusTimes: Float64Array;
  readonly lickTimes: Float64Array;
}

/**
 * Run the agent through the task: cue → choice → outcome per trial, reversal blocks, bonus
 * rewards in the inter-trial interval, and licks.
 *
 * The agent is Q-learning with a softmax and a choice kernel: P(a) ∝ exp(β·Q(a) + β_C·C(a)),
 * Q0 = C0 = 0; after choice c with outcome r, RPE = r − Q(c) and Q(c) += α·RPE; every option's
 * C(a) += α_C·(1{a = c} − C(a)); APE = 1 − C(c) before the update.
 *
 * References
 * - Wilson, R. C. & Collins, A. G. E. (2019). Ten simple rules for the computational modeling of
 *   behavioral data. eLife 8:e49547. doi:10.7554/eLife.49547 (RW + choice kernel model)
 * - Miller, K. J., Shenhav, A. & Ludvig, E. A. (2019). Habits without values. Psychol. Rev.
 *   126(2):292–311. doi:10.1037/rev0000120 (habit strength and action prediction error)
 */
export function runTask(o: Required<SimulateOptions>, rng: Rng): TaskRun {
  const T = TASK_TIMING;
  const cap = Math.ceil(o.durationSec / (T.minLatencySec + T.outcomeDelaySec + T.itiMinSec)) + 2;
  const cue = new Float64Array(cap), chT = new Float64Array(cap), ch = new Int32Array(cap);
  const outT = new Float64Array(cap), rew = new Float64Array(cap), rpe = new Float64Array(cap);
  const ape = new Float64Array(cap), qc = new Float64Array(cap), cc = new Float64Array(cap);
  const pc = new Float64Array(cap), pr = new Float64Array(cap * 2);
  const blocks: number[] = [];
  const bonus: number[] = [];
  const licks: number[] = [];
  const agent: AgentState = { q: new Float64Array(2), c: new Float64Array(2) };
  const probs = new Float64Array(2);
  let better = rng.int(2);
  let blockLeft = 0;
  let t: number = T.firstCueSec;
  let n = 0;
  const [pHi, pLo] = o.rewardProbs;
  for (;;) {
    const latency = T.minLatencySec + rng.gamma(2, 0.25);
    const tChoice = t + latency;
    const tOut = tChoice + T.outcomeDelaySec;
    if (tOut + T.tailSec > o.durationSec || n >= cap) break;
    if (blockLeft === 0) {
      if (n > 0) better = 1 - better;
      blockLeft = o.blockTrials[0] + rng.int(o.blockTrials[1] - o.blockTrials[0] + 1);
      blocks.push(n);
    }
    blockLeft--;
    const p0 = better === 0 ? pHi : pLo;
    const p1 = better === 1 ? pHi : pLo;
    agentPolicy(agent, o, probs);
    const prob1 = probs[1]!;
    const choice = rng.uniform() < prob1 ? 1 : 0;
    const r = rng.uniform() < (choice === 0 ? p0 : p1) ? 1 : 0;
    cue[n] = t; chT[n] = tChoice; ch[n] = choice; outT[n] = tOut; rew[n] = r;
    pr[2 * n] = p0; pr[2 * n + 1] = p1;
    pc[n] = choice === 1 ? prob1 : 1 - prob1;
    qc[n] = agent.q[choice]!; cc[n] = agent.c[choice]!;
    const err = agentUpdate(agent, o, choice, r);
    rpe[n] = err.rpe;
    ape[n] = err.ape;
    // Licks: a consummatory bout after a reward, a short check after an omission.
    lickBout(licks, tOut + 0.15 + 0.1 * rng.uniform(), r === 1 ? 1.5 + 1.5 * rng.uniform() : 0.3 * rng.uniform(), rng);
    const iti = T.itiMinSec + rng.exponential(1 / T.itiMeanExtraSec);
    const nextCue = tOut + iti;
    // Bonus rewards: Poisson in the guarded part of the inter-trial interval.
    let tb = tOut + T.bonusGuardSec;
    for (;;) {
      tb += o.bonusRate > 0 ? rng.exponential(o.bonusRate) : Infinity;
      if (tb > nextCue - T.bonusGuardSec || tb > o.durationSec - T.tailSec) break;
      bonus.push(tb);
      lickBout(licks, tb + 0.15 + 0.1 * rng.uniform(), 1.5 + 1.5 * rng.uniform(), rng);
      tb += T.bonusGuardSec; // no two bonuses closer than the guard
    }
    n++;
    t = nextCue;
  }
  // Sparse spontaneous licks (one every ~30 s), kept away from bouts.
  const spont: number[] = [];
  for (let ts = rng.exponential(1 / 30); ts < o.durationSec - 1; ts += rng.exponential(1 / 30)) spont.push(ts);
  const allLicks = Float64Array.from([...licks, ...spont].filter((x) => x < o.durationSec - 0.01)).sort();
  return {
    cueTime: cue.slice(0, n), choiceTime: chT.slice(0, n), choice: ch.slice(0, n), outcomeTime: outT.slice(0, n),
    reward: rew.slice(0, n), rpe: rpe.slice(0, n), ape: ape.slice(0, n), qChosen: qc.slice(0, n), cChosen: cc.slice(0, n),
    pChoice: pc.slice(0, n), pReward: pr.slice(0, 2 * n), blockStarts: Int32Array.from(blocks),
    bonusTimes: Float64Array.from(bonus), lickTimes: allLicks,
  };
}

/** Licks at ~7 Hz (inter-lick interval 0.14 ± 0.015 s) from `start` for `durationSec`. */
function lickBout(out: number[], start: number, durationSec: number, rng: Rng): void {
  for (let t = start; t < start + durationSec; t += 0.14 + 0.015 * rng.normal()) out.push(t);
}

/** Movement bouts: one before each choice (approach to the port) and spontaneous ones. */
export interface MovementBouts {
  readonly onset: Float64Array;
  readonly duration: Float64Array;
  readonly vigour: Float64Array;
  readonly atChoice: Uint8Array;
}

/** Minimum quiet time between the end of one bout and the next onset (s). */
export const MOVEMENT_QUIET_SEC = 0.8;

/**
 * Movement bouts of the head-mounted accelerometer. Approach bouts start 0.25–0.45 s before each
 * choice; spontaneous bouts arrive as a Poisson process and are kept only where the animal has
 * been still for MOVEMENT_QUIET_SEC, so every onset is preceded by quiescence. Vigour (peak
 * acceleration above gravity, g) is log-normal with median 0.3 g.
 */
export function movementBouts(o: Required<SimulateOptions>, task: TaskRun, rng: Rng): MovementBouts {
  type Bout = { on: number; dur: number; vig: number; choice: number };
  const bouts: Bout[] = [];
  for (let i = 0; i < task.choiceTime.length; i++) {
    const on = Math.max(task.cueTime[i]! + 0.1, task.choiceTime[i]! - 0.25 - 0.2 * rng.uniform());
    bouts.push({ on, dur: task.choiceTime[i]! - on + 0.1 + 0.2 * rng.uniform(), vig: 0.3 * Math.exp(0.35 * rng.normal()), choice: 1 });
  }
  const fixed = bouts.slice().sort((a, b) => a.on - b.on);
  let ts = 1;
  const spontaneous: Bout[] = [];
  for (;;) {
    ts += o.movementRate > 0 ? rng.exponential(o.movementRate) : Infinity;
    if (ts > o.durationSec - 3) break;
    const dur = 0.4 + 0.8 * rng.uniform();
    const vig = 0.3 * Math.exp(0.35 * rng.normal());
    spontaneous.push({ on: ts, dur, vig, choice: 0 });
  }
  // Keep spontaneous bouts that do not crowd any other bout (quiet before and after).
  const kept: Bout[] = [...fixed];
  const clash = (b: Bout) => kept.some((k) => b.on < k.on + k.dur + MOVEMENT_QUIET_SEC && k.on < b.on + b.dur + MOVEMENT_QUIET_SEC);
  for (const b of spontaneous) if (!clash(b)) kept.push(b);
  kept.sort((a, b) => a.on - b.on);
  const n = kept.length;
  const out = {
    onset: new Float64Array(n), duration: new Float64Array(n), vigour: new Float64Array(n),
    atChoice: new Uint8Array(n),
  };
  kept.forEach((b, i) => {
    out.onset[i] = b.on; out.duration[i] = b.dur; out.vigour[i] = b.vig; out.atChoice[i] = b.choice;
  });
  return out;
}
