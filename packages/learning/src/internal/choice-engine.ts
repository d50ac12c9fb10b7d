// The choice-model kernel: negative log-likelihood with its analytic gradient (forward-mode
// recursion of dQ/dθ and dC/dθ through the trials), per-trial traces for the regressors, and
// simulation. Inputs are trusted (checked by the public functions).
import type { Rng } from '@tuningfork/core';
import type { ModelStructure } from '../choice/model.js';
import type { PreparedChoices } from '../choice/data.js';

/** Index of each parameter in the vector (−1 when the model lacks it). */
export interface CompiledModel {
  readonly m: ModelStructure;
  readonly nParams: number;
  readonly iAlpha: number;
  readonly iAlphaPos: number;
  readonly iAlphaNeg: number;
  readonly iBeta: number;
  readonly iForget: number;
  readonly iAlphaC: number;
  readonly iBetaC: number;
  readonly iEpsilon: number;
  readonly iBias: number;
}

export function compileModel(m: ModelStructure): CompiledModel {
  const at = (name: string) => (m.params as readonly string[]).indexOf(name);
  return {
    m,
    nParams: m.params.length,
    iAlpha: at('alpha'),
    iAlphaPos: at('alphaPos'),
    iAlphaNeg: at('alphaNeg'),
    iBeta: at('beta'),
    iForget: at('forget'),
    iAlphaC: at('alphaC'),
    iBetaC: at('betaC'),
    iEpsilon: at('epsilon'),
    iBias: at('bias'),
  };
}

/** Per-row quantities recorded during a pass (rows × nOptions for q and c). */
export interface ChoiceTrace {
  readonly q: Float64Array;
  readonly c: Float64Array;
  readonly prob: Float64Array;
  readonly vCue: Float64Array;
  readonly qChosen: Float64Array;
  readonly rpe: Float64Array;
  readonly ape: Float64Array;
  readonly pChoice: Float64Array;
  readonly logp: Float64Array;
  /** State after the last trial of each session (nSessions × nOptions). */
  readonly finalQ: Float64Array;
  readonly finalC: Float64Array;
}

export function allocTrace(rows: number, nOptions: number, nSessions: number): ChoiceTrace {
  return {
    q: new Float64Array(rows * nOptions),
    c: new Float64Array(rows * nOptions),
    prob: new Float64Array(rows * nOptions),
    vCue: new Float64Array(rows),
    qChosen: new Float64Array(rows),
    rpe: new Float64Array(rows),
    ape: new Float64Array(rows),
    pChoice: new Float64Array(rows),
    logp: new Float64Array(rows),
    finalQ: new Float64Array(nSessions * nOptions),
    finalC: new Float64Array(nSessions * nOptions),
  };
}

/** Scratch memory for one model × option count; reuse across evaluations. */
export class ChoiceEngine {
  readonly cm: CompiledModel;
  readonly nOptions: number;
  private readonly q: Float64Array;
  private readonly c: Float64Array;
  private readonly z: Float64Array;
  private readonly p: Float64Array;
  private readonly dq: Float64Array;
  private readonly dc: Float64Array;
  private readonly dz: Float64Array;
  private readonly gTheta: Float64Array;
  /** Row at which the last evaluation became non-finite (−1 when finite). */
  badRow = -1;

  constructor(cm: CompiledModel, nOptions: number) {
    this.cm = cm;
    this.nOptions = nOptions;
    const K = nOptions;
    const P = Math.max(1, cm.nParams);
    this.q = new Float64Array(K);
    this.c = new Float64Array(K);
    this.z = new Float64Array(K);
    this.p = new Float64Array(K);
    this.dq = new Float64Array(K * P);
    this.dc = new Float64Array(K * P);
    this.dz = new Float64Array(K * P);
    this.gTheta = new Float64Array(P);
  }

  /**
   * Negative log-likelihood at natural parameters `theta`. When `grad` is given it receives
   * ∂NLL/∂θ (natural scale). When `trace` is given, per-row quantities are recorded.
   * Returns NaN (and sets `badRow`) as soon as a log-probability is not finite.
   */
  nll(d: PreparedChoices, theta: Float64Array, grad: Float64Array | null, trace: ChoiceTrace | null): number {
    const cm = this.cm;
    const kind = cm.m.kind;
    const K = this.nOptions;
    const P = cm.nParams;
    const { q, c, z, p, dq, dc, dz } = this;
    const g = this.gTheta;
    const wantGrad = grad !== null && P > 0;
    g.fill(0);
    this.badRow = -1;
    const hasQ = cm.m.value !== 'none';
    const dual = cm.m.value === 'dual';
    const hasC = cm.m.choiceKernel;
    const forgetting = cm.m.forgetting;
    const beta = cm.iBeta >= 0 ? theta[cm.iBeta]! : 0;
    const betaC = cm.iBetaC >= 0 ? theta[cm.iBetaC]! : 0;
    const alpha = cm.iAlpha >= 0 ? theta[cm.iAlpha]! : 0;
    const alphaPos = cm.iAlphaPos >= 0 ? theta[cm.iAlphaPos]! : 0;
    const alphaNeg = cm.iAlphaNeg >= 0 ? theta[cm.iAlphaNeg]! : 0;
    const forget = cm.iForget >= 0 ? theta[cm.iForget]! : 0;
    const alphaC = cm.iAlphaC >= 0 ? theta[cm.iAlphaC]! : 0;
    const eps = cm.iEpsilon >= 0 ? theta[cm.iEpsilon]! : 0;
    const bias = cm.iBias >= 0 ? theta[cm.iBias]! : 0;
    const choice = d.choice;
    const reward = d.reward;
    let total = 0;
    for (let s = 0; s < d.nSessions; s++) {
      q.fill(0);
      c.fill(0);
      if (wantGrad) {
        dq.fill(0);
        dc.fill(0);
      }
      let prevChoice = -1;
      let prevReward = 0;
      const end = d.sessionStart[s + 1]!;
      for (let t = d.sessionStart[s]!; t < end; t++) {
        // ---- policy
        let lse = 0;
        if (kind === 'softmax') {
          let zmax = -Infinity;
          let amax = 0;
          for (let a = 0; a < K; a++) {
            const za = beta * q[a]! + betaC * c[a]!;
            z[a] = za;
            if (za > zmax) {
              zmax = za;
              amax = a;
            }
          }
          // log-sum-exp as zmax + log1p(Σ_{a≠amax} e^(z_a − zmax)): full relative precision of
          // log P even when P is within 1e-16 of 1 (a deterministic chooser's plateau).
          let others = 0;
          for (let a = 0; a < K; a++) if (a !== amax) others += Math.exp(z[a]! - zmax);
          lse = zmax + Math.log1p(others);
          for (let a = 0; a < K; a++) p[a] = Math.exp(z[a]! - lse);
        } else if (kind === 'wsls') {
          if (prevChoice < 0) {
            p.fill(1 / K);
          } else if (prevReward > 0) {
            for (let a = 0; a < K; a++) p[a] = eps / K + (a === prevChoice ? 1 - eps : 0);
          } else {
            for (let a = 0; a < K; a++) p[a] = eps / K + (a === prevChoice ? 0 : (1 - eps) / (K - 1));
          }
        } else if (kind === 'bias') {
          p[0] = 1 - bias;
          p[1] = bias;
        } else {
          p.fill(1 / K);
        }
        const ch = choice[t]!;
        if (trace) {
          let v = 0;
          for (let a = 0; a < K; a++) {
            trace.q[t * K + a] = hasQ ? q[a]! : NaN;
            trace.c[t * K + a] = hasC ? c[a]! : NaN;
            trace.prob[t * K + a] = p[a]!;
            v += p[a]! * q[a]!;
          }
          trace.vCue[t] = hasQ ? v : NaN;
          if (ch < 0) {
            trace.qChosen[t] = NaN;
            trace.rpe[t] = NaN;
            trace.ape[t] = NaN;
            trace.pChoice[t] = NaN;
            trace.logp[t] = NaN;
          }
        }
        if (ch < 0) continue; // skipped trial: no likelihood term, no update
        const logp = kind === 'softmax' ? z[ch]! - lse : Math.log(p[ch]!);
        if (!Number.isFinite(logp)) {
          this.badRow = t;
          return NaN;
        }
        total -= logp;
        const r = reward[t]!;
        if (trace) {
          trace.logp[t] = logp;
          trace.pChoice[t] = p[ch]!;
          trace.qChosen[t] = hasQ ? q[ch]! : NaN;
          trace.rpe[t] = hasQ ? r - q[ch]! : NaN;
          trace.ape[t] = hasC ? 1 - c[ch]! : NaN;
        }
        // ---- gradient of −log p(ch)
        if (wantGrad) {
          if (kind === 'softmax') {
            for (let a = 0; a < K; a++) {
              const o = a * P;
              for (let j = 0; j < P; j++) dz[o + j] = beta * dq[o + j]! + betaC * dc[o + j]!;
              if (cm.iBeta >= 0) dz[o + cm.iBeta] = dz[o + cm.iBeta]! + q[a]!;
              if (cm.iBetaC >= 0) dz[o + cm.iBetaC] = dz[o + cm.iBetaC]! + c[a]!;
            }
            // ∂log p(ch)/∂θ_j = dz_ch − Σ_a p_a dz_a = Σ_{a≠ch} p_a (dz_ch − dz_a): no cancellation when p_ch ≈ 1.
            for (let j = 0; j < P; j++) {
              const dzc = dz[ch * P + j]!;
              let acc = 0;
              for (let a = 0; a < K; a++) if (a !== ch) acc += p[a]! * (dzc - dz[a * P + j]!);
              g[j] = g[j]! - acc;
            }
          } else if (kind === 'wsls') {
            if (prevChoice >= 0) {
              const target = prevReward > 0 ? (ch === prevChoice ? 1 : 0) : ch === prevChoice ? 0 : 1 / (K - 1);
              g[cm.iEpsilon] = g[cm.iEpsilon]! - (1 / K - target) / p[ch]!;
            }
          } else if (kind === 'bias') {
            g[cm.iBias] = g[cm.iBias]! - (ch === 1 ? 1 / bias : -1 / (1 - bias));
          }
        }
        // ---- learning
        if (hasQ) {
          const delta = r - q[ch]!;
          let lr = alpha;
          let iLr = cm.iAlpha;
          if (dual) {
            if (delta >= 0) {
              lr = alphaPos;
              iLr = cm.iAlphaPos;
            } else {
              lr = alphaNeg;
              iLr = cm.iAlphaNeg;
            }
          }
          if (forgetting) {
            const keep = 1 - forget;
            for (let a = 0; a < K; a++) {
              if (a === ch) continue;
              if (wantGrad) {
                const o = a * P;
                for (let j = 0; j < P; j++) dq[o + j] = keep * dq[o + j]!;
                dq[o + cm.iForget] = dq[o + cm.iForget]! - q[a]!;
              }
              q[a] = keep * q[a]!;
            }
          }
          if (wantGrad) {
            const o = ch * P;
            for (let j = 0; j < P; j++) dq[o + j] = (1 - lr) * dq[o + j]!;
            dq[o + iLr] = dq[o + iLr]! + delta;
          }
          q[ch] = q[ch]! + lr * delta;
        }
        if (hasC) {
          for (let a = 0; a < K; a++) {
            const diff = (a === ch ? 1 : 0) - c[a]!;
            if (wantGrad) {
              const o = a * P;
              for (let j = 0; j < P; j++) dc[o + j] = (1 - alphaC) * dc[o + j]!;
              dc[o + cm.iAlphaC] = dc[o + cm.iAlphaC]! + diff;
            }
            c[a] = c[a]! + alphaC * diff;
          }
        }
        prevChoice = ch;
        prevReward = r;
      }
      if (trace) {
        for (let a = 0; a < K; a++) {
          trace.finalQ[s * K + a] = hasQ ? q[a]! : NaN;
          trace.finalC[s * K + a] = hasC ? c[a]! : NaN;
        }
      }
    }
    if (wantGrad) grad!.set(g.subarray(0, P));
    if (!Number.isFinite(total)) {
      this.badRow = d.sessionStart[d.nSessions]! - 1;
      return NaN;
    }
    return total;
  }

  /**
   * Simulate one session: on row t the agent chooses from its policy, then the chosen option pays 1
   * with probability `rewardProb[t * K + choice]` (else 0), then it learns. Writes `choiceOut`
   * and `rewardOut`; the per-trial quantities follow from `nll(…, trace)` on the result.
   */
  simulate(theta: Float64Array, rewardProb: Float64Array, nTrials: number, random: Rng, choiceOut: Int32Array, rewardOut: Float64Array): void {
    const cm = this.cm;
    const kind = cm.m.kind;
    const K = this.nOptions;
    const { q, c, p } = this;
    const beta = cm.iBeta >= 0 ? theta[cm.iBeta]! : 0;
    const betaC = cm.iBetaC >= 0 ? theta[cm.iBetaC]! : 0;
    const alpha = cm.iAlpha >= 0 ? theta[cm.iAlpha]! : 0;
    const alphaPos = cm.iAlphaPos >= 0 ? theta[cm.iAlphaPos]! : 0;
    const alphaNeg = cm.iAlphaNeg >= 0 ? theta[cm.iAlphaNeg]! : 0;
    const forget = cm.iForget >= 0 ? theta[cm.iForget]! : 0;
    const alphaC = cm.iAlphaC >= 0 ? theta[cm.iAlphaC]! : 0;
    const eps = cm.iEpsilon >= 0 ? theta[cm.iEpsilon]! : 0;
    const bias = cm.iBias >= 0 ? theta[cm.iBias]! : 0;
    q.fill(0);
    c.fill(0);
    let prevChoice = -1;
    let prevReward = 0;
    for (let t = 0; t < nTrials; t++) {
      if (kind === 'softmax') {
        let zmax = -Infinity;
        for (let a = 0; a < K; a++) {
          const za = beta * q[a]! + betaC * c[a]!;
          p[a] = za;
          if (za > zmax) zmax = za;
        }
        let sum = 0;
        for (let a = 0; a < K; a++) {
          p[a] = Math.exp(p[a]! - zmax);
          sum += p[a]!;
        }
        for (let a = 0; a < K; a++) p[a] = p[a]! / sum;
      } else if (kind === 'wsls') {
        if (prevChoice < 0) p.fill(1 / K);
        else if (prevReward > 0) for (let a = 0; a < K; a++) p[a] = eps / K + (a === prevChoice ? 1 - eps : 0);
        else for (let a = 0; a < K; a++) p[a] = eps / K + (a === prevChoice ? 0 : (1 - eps) / (K - 1));
      } else if (kind === 'bias') {
        p[0] = 1 - bias;
        p[1] = bias;
      } else {
        p.fill(1 / K);
      }
      // inverse-CDF draw
      const u = random.uniform();
      let ch = K - 1;
      let acc = 0;
      for (let a = 0; a < K; a++) {
        acc += p[a]!;
        if (u < acc) {
          ch = a;
          break;
        }
      }
      const r = random.uniform() < rewardProb[t * K + ch]! ? 1 : 0;
      choiceOut[t] = ch;
      rewardOut[t] = r;
      if (cm.m.value !== 'none') {
        const delta = r - q[ch]!;
        const lr = cm.m.value === 'dual' ? (delta >= 0 ? alphaPos : alphaNeg) : alpha;
        if (cm.m.forgetting) for (let a = 0; a < K; a++) if (a !== ch) q[a] = (1 - forget) * q[a]!;
        q[ch] = q[ch]! + lr * delta;
      }
      if (cm.m.choiceKernel) for (let a = 0; a < K; a++) c[a] = c[a]! + alphaC * ((a === ch ? 1 : 0) - c[a]!);
      prevChoice = ch;
      prevReward = r;
    }
  }
}
