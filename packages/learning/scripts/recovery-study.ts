// Parameter and model recovery study for the learning models (Wilson & Collins 2019, rules 5–6).
//
//   npx tsx --conditions=@tuningfork/source packages/learning/scripts/recovery-study.ts \
//       [--agents 50] [--trials 500] [--starts 10] [--workers 2] [--seed 1]
//
// Prints markdown tables: (1) parameter recovery of the combined model (Q-learning + choice kernel)
// on the simulator's task (two ports, 0.8/0.2, reversals every 30–60 trials) for three ranges of
// true parameters; (2) the same on sessions made by @tuningfork/simulate's own agent; (3) model
// recovery (confusion and inversion matrices) by BIC and by AIC. Everything is seeded.
import { rng } from '@tuningfork/core';
import type { Matrix } from '@tuningfork/core';
import { simulateSession } from '@tuningfork/simulate';
import { RECOVERY_RANGES, choiceRegressors, fitChoiceModel, modelRecovery, parameterRecovery } from '@tuningfork/learning';
import type { ChoiceParamName, ParameterRecovery } from '@tuningfork/learning';

function arg(name: string, fallback: number): number {
  const i = process.argv.indexOf(`--${name}`);
  return i >= 0 ? Number(process.argv[i + 1]) : fallback;
}
const nAgents = arg('agents', 50);
const nTrials = arg('trials', 500);
const starts = arg('starts', 10);
const workers = arg('workers', 2);
const seed = arg('seed', 1);
const f3 = (x: number) => (Number.isFinite(x) ? x.toFixed(3) : String(x));
const TARGET = 0.9;

function pearson(x: ArrayLike<number>, y: ArrayLike<number>): number {
  const n = x.length;
  let mx = 0;
  let my = 0;
  for (let i = 0; i < n; i++) {
    mx += x[i]! / n;
    my += y[i]! / n;
  }
  let sxx = 0;
  let syy = 0;
  let sxy = 0;
  for (let i = 0; i < n; i++) {
    sxx += (x[i]! - mx) ** 2;
    syy += (y[i]! - my) ** 2;
    sxy += (x[i]! - mx) * (y[i]! - my);
  }
  return sxy / Math.sqrt(sxx * syy);
}

function matrixTable(m: Matrix, rows: readonly string[], cols: readonly string[]): string {
  const head = `| | ${cols.join(' | ')} |\n|---|${cols.map(() => '---').join('|')}|`;
  const body = rows.map((r, i) => `| ${r} | ${cols.map((_, j) => f3(m.data[i * m.cols + j]!)).join(' | ')} |`).join('\n');
  return `${head}\n${body}`;
}

function recoveryTable(res: ParameterRecovery): string {
  const lines = ['| parameter | true range | Pearson r | Spearman ρ | bias | RMSE | fits at bound | r ≥ 0.9 |', '|---|---|---|---|---|---|---|---|'];
  res.paramNames.forEach((p, j) => {
    const [lo, hi] = res.ranges[j]!;
    lines.push(`| ${p} | [${lo}, ${hi}] | ${f3(res.correlation[j]!)} | ${f3(res.rankCorrelation[j]!)} | ${f3(res.bias[j]!)} | ${f3(res.rmse[j]!)} | ${res.nAtBound[j]} | ${res.correlation[j]! >= TARGET ? 'yes' : 'no'} |`);
  });
  return lines.join('\n');
}

const settings: { label: string; ranges: Partial<Record<ChoiceParamName, readonly [number, number]>> }[] = [
  { label: 'library default ranges (RECOVERY_RANGES)', ranges: {} },
  { label: 'moderate β (β ∈ [0.5, 6], β_C ∈ [0, 3])', ranges: { beta: [0.5, 6], betaC: [0, 3] } },
  { label: 'around the simulator defaults (α 0.3, β 2.5, α_C 0.3, β_C 2.5; ±50 %)', ranges: { alpha: [0.15, 0.45], beta: [1.25, 3.75], alphaC: [0.15, 0.45], betaC: [1.25, 3.75] } },
];

console.log(`# Recovery study — ${nAgents} agents × ${nTrials} trials, ${starts} starts per fit, ${workers} worker thread(s), seed ${seed}\n`);
console.log('Task: two options, reward probabilities 0.8 / 0.2, reversal every 30–60 trials (uniform).');
console.log(`Library default ranges: ${JSON.stringify(RECOVERY_RANGES)}\n`);

console.log(`## 1. Parameter recovery, combined model 'q-ck' (P ∝ exp(β·Q + β_C·C)), simulateChoices\n`);
for (const s of settings) {
  const t0 = performance.now();
  const res = await parameterRecovery({ model: 'q-ck', nAgents, nTrials, starts, workers, seed, ranges: s.ranges });
  const sec = (performance.now() - t0) / 1000;
  console.log(`### ${s.label}\n`);
  console.log(recoveryTable(res));
  console.log(`\nCorrelations among fitted parameters (true parameters are drawn independently):\n`);
  console.log(matrixTable(res.fittedCorrelation, res.paramNames, res.paramNames));
  const conv = res.converged.reduce((a, b) => a + b, 0);
  console.log(`\n${sec.toFixed(1)} s on ${res.workersUsed} thread(s); ${conv}/${nAgents} fits converged; warnings: ${res.warnings.map((w) => w.code).join(', ') || 'none'}\n`);
}

console.log(`## 2. Parameter recovery on @tuningfork/simulate's agent (simulateSession, first ${nTrials} trials)\n`);
{
  const t0 = performance.now();
  const names = ['alpha', 'beta', 'alphaC', 'betaC'] as const;
  const ranges = settings[0]!.ranges;
  const truth: number[][] = [[], [], [], []];
  const fitted: number[][] = [[], [], [], []];
  let rpeMin = Infinity;
  let apeMin = Infinity;
  const root = rng(seed);
  for (let a = 0; a < nAgents; a++) {
    const r = root.stream(a);
    const p = names.map((n) => {
      const [lo, hi] = ranges[n] ?? RECOVERY_RANGES[n];
      return lo + (hi - lo) * r.uniform();
    });
    // ~9.9 s per trial in the simulated task: ask for enough session time for nTrials trials.
    const sim = simulateSession({ durationSec: Math.ceil(nTrials * 11.5), photometryRate: 1, nSites: 0, nUnits: 0, accelRate: 20, alpha: p[0]!, beta: p[1]!, alphaC: p[2]!, betaC: p[3]!, seed: 1000 + a });
    const tr = sim.session.trials!;
    const n = Math.min(nTrials, tr.choice.length);
    const fit = fitChoiceModel({ choice: tr.choice.subarray(0, n), reward: tr.reward.subarray(0, n) }, { model: 'q-ck', starts, seed: a });
    names.forEach((_, j) => {
      truth[j]!.push(p[j]!);
      fitted[j]!.push(fit.estimates[j]!);
    });
    if (a < 10) {
      const reg = choiceRegressors({ choice: tr.choice.subarray(0, n), reward: tr.reward.subarray(0, n) }, fit.params, { model: 'q-ck' });
      rpeMin = Math.min(rpeMin, pearson(reg.rpe, sim.truth.rpe.subarray(0, n)));
      apeMin = Math.min(apeMin, pearson(reg.ape, sim.truth.ape.subarray(0, n)));
    }
  }
  console.log('| parameter | Pearson r | r ≥ 0.9 |\n|---|---|---|');
  names.forEach((nm, j) => {
    const r = pearson(truth[j]!, fitted[j]!);
    console.log(`| ${nm} | ${f3(r)} | ${r >= TARGET ? 'yes' : 'no'} |`);
  });
  console.log(`\nPer-trial regressors of the first ${Math.min(10, nAgents)} agents vs simulator truth: min r(RPE) = ${f3(rpeMin)}, min r(APE) = ${f3(apeMin)}.`);
  console.log(`${((performance.now() - t0) / 1000).toFixed(1)} s (this section runs on one thread).\n`);
}

console.log(`## 3. Model recovery (${Math.max(10, Math.round(nAgents / 2.5))} agents per model)\n`);
for (const criterion of ['bic', 'aic'] as const) {
  const t0 = performance.now();
  const res = await modelRecovery({ models: ['bias', 'wsls', 'q', 'ck', 'q-ck'], agentsPerModel: Math.max(10, Math.round(nAgents / 2.5)), nTrials, starts, workers, seed, criterion });
  console.log(`### ${criterion.toUpperCase()}: ${(100 * res.accuracy).toFixed(1)} % of agents best fitted by their generating model (target ≥ 80 %)\n`);
  console.log('Confusion matrix p(best fit | generator) — rows: generator, columns: fitted model\n');
  console.log(matrixTable(res.confusion, res.models, res.models));
  console.log('\nInversion matrix p(generator | best fit) — rows: generator, columns: fitted model\n');
  console.log(matrixTable(res.inversion, res.models, res.models));
  console.log(`\n${((performance.now() - t0) / 1000).toFixed(1)} s on ${res.workersUsed} thread(s)\n`);
}
