// Parameter and model recovery study for the learning models (Wilson & Collins 2019, rules 5–6),
// answering issue 6: "with 500 trials at the simulator's default parameters, fitted learning rate and
// inverse temperatures correlate ≥ 0.9 with the truth across ≥ 50 simulated agents, and the per-trial
// RPE and APE correlate ≥ 0.95 with the true ones; model recovery picks the generating model in ≥ 80 %".
//
//   npx tsx --conditions=@tuningfork/source packages/learning/scripts/recovery-study.ts \
//       [--agents 50] [--trials 500] [--starts 20] [--workers 2] [--seed 1] [--scaling 1000,2000 | none]
//
// Prints markdown tables (≈ 3 min on 2 cores):
//  1. parameter recovery of the combined model 'q-ck' (P ∝ exp(β·Q + β_C·C)) on the simulator's task,
//     maximum likelihood (ML), MAP with the weakly informative priors, and the hierarchical
//     empirical-Bayes fit (EB, fitChoicePopulation: Gaussian population prior fitted by EM), for three
//     populations of agents, with an approximate information ceiling per parameter;
//  2. how the correlations grow with the number of trials (MAP and EB);
//  3. sessions made by @tuningfork/simulate's own agent: a model-equivalence check, per-trial RPE/APE
//     correlations at the simulator's default parameters, and recovery on two populations;
//  4. model recovery (confusion and inversion matrices) by BIC and by AIC.
// Everything is seeded.
import { rng } from '@tuningfork/core';
import type { Matrix } from '@tuningfork/core';
import { SIMULATE_DEFAULTS, simulateSession } from '@tuningfork/simulate';
import { RECOVERY_RANGES, choiceRegressors, fitChoiceModel, modelRecovery, parameterRecovery } from '@tuningfork/learning';
import type { ChoiceParamName, ChoicePriors, ParameterRecovery, ParameterRecoveryOptions } from '@tuningfork/learning';
import { DEF, NAMES, POPULATIONS, logistic, logit } from './populations.js';

function arg(name: string, fallback: string): string {
  const i = process.argv.indexOf(`--${name}`);
  return i >= 0 ? process.argv[i + 1]! : fallback;
}
const nAgents = Number(arg('agents', '50'));
const nTrials = Number(arg('trials', '500'));
const starts = Number(arg('starts', '20'));
const workers = Number(arg('workers', '2'));
const seed = Number(arg('seed', '1'));
const scalingArg = arg('scaling', '1000,2000');
const scaling = scalingArg === 'none' ? [] : scalingArg.split(',').map(Number);
const f3 = (x: number) => (Number.isFinite(x) ? x.toFixed(3) : String(x));
const f2 = (x: number) => (Number.isFinite(x) ? x.toFixed(2) : String(x));
const TARGET = 0.9;
// Per-agent estimators (sections 1 and 3).
const ESTIMATORS: readonly { label: string; priors: ChoicePriors }[] = [
  { label: 'ML', priors: 'none' },
  { label: 'MAP', priors: 'weakly-informative' },
];
// Section 1 adds the hierarchical fit: initial per-agent fits with the weakly informative priors, then EM
// of a Gaussian population prior on the transformed scale with fitChoicePopulation's default settings.
const RECOVERY_ESTIMATORS: readonly { label: string; options: Pick<ParameterRecoveryOptions, 'priors' | 'estimator'> }[] = [
  ...ESTIMATORS.map((e) => ({ label: e.label, options: { priors: e.priors } })),
  { label: 'EB', options: { estimator: 'empirical-bayes' } },
];

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

function quantile(x: readonly number[], p: number): number {
  const s = [...x].sort((a, b) => a - b);
  const h = (s.length - 1) * p;
  const lo = Math.floor(h);
  return s[lo]! + (h - lo) * ((s[Math.min(lo + 1, s.length - 1)] ?? s[lo]!) - s[lo]!);
}

/**
 * Approximate information ceiling of the true–fitted correlation for parameter j: the correlation the
 * posterior mean would reach if the population were Gaussian with the sample variance V of the true
 * values and each fit's standard error s_i were its likelihood width: r* = √(1 − mean_i v_i / V) with
 * v_i = 1/(1/s_i² + 1/V) (fits without an SE are left out). No estimator of one agent's parameter
 * from its own 500 trials can do much better; an observed r well below r* means the estimator loses
 * information (outliers, plateaus), r near r* means the data are the limit.
 */
function ceiling(res: ParameterRecovery, j: number): number {
  const k = res.paramNames.length;
  const t: number[] = [];
  for (let a = 0; a < res.nAgents; a++) t.push(res.truth.data[a * k + j]!);
  const m = t.reduce((s, x) => s + x, 0) / t.length;
  const v = t.reduce((s, x) => s + (x - m) ** 2, 0) / (t.length - 1);
  let sum = 0;
  let n = 0;
  for (let a = 0; a < res.nAgents; a++) {
    const se = res.se.data[a * k + j]!;
    if (!Number.isFinite(se)) continue;
    sum += 1 / (1 / (se * se) + 1 / v);
    n++;
  }
  return Math.sqrt(Math.max(0, 1 - sum / n / v));
}

function matrixTable(m: Matrix, rows: readonly string[], cols: readonly string[]): string {
  const head = `| | ${cols.join(' | ')} |\n|---|${cols.map(() => '---').join('|')}|`;
  const body = rows.map((r, i) => `| ${r} | ${cols.map((_, j) => f3(m.data[i * m.cols + j]!)).join(' | ')} |`).join('\n');
  return `${head}\n${body}`;
}

// ---- populations of agents: scripts/populations.ts ----------------------------------------
const D = SIMULATE_DEFAULTS;
const rangeText = (r: readonly [number, number]) => `[${f3(r[0])}, ${f3(r[1])}]`;

console.log(`# Recovery study — ${nAgents} agents × ${nTrials} trials, ${starts} starts per fit, ${workers} worker thread(s), seed ${seed}\n`);
console.log(`Task (the simulator's): two options, reward probabilities ${D.rewardProbs.join(' / ')}, reversal every ${D.blockTrials.join('–')} trials (uniform).`);
console.log(`Simulator default agent: α ${DEF.alpha}, β ${DEF.beta}, α_C ${DEF.alphaC}, β_C ${DEF.betaC} (Q0 = C0 = 0).`);
console.log('Estimators: ML = maximum likelihood; MAP = priors \'weakly-informative\' (Beta(1.1, 1.1) on α and α_C, Gamma(1.2, scale 5) on β, Normal(0, 5) on β_C; Daw 2011); EB = empirical Bayes (parameterRecovery estimator \'empirical-bayes\' = fitChoicePopulation: a Gaussian population prior on logit α, logit(β/50), logit α_C, logit((β_C + 20)/40) fitted by EM with Laplace posteriors across the agents of the population, initialised from the MAP fits; each agent\'s estimate is its posterior mode; Huys et al. 2011).');
console.log('A correlation across agents needs a spread of true parameters, so "at the simulator\'s default parameters" is read as populations centred on them (rows "centred", "narrow"); the per-trial RPE/APE criterion is also checked at exactly the defaults (section 3).\n');
console.log('Populations:\n');
for (const p of POPULATIONS) console.log(`- **${p.key}** — ${p.label}: ${p.why}. Ranges: ${NAMES.map((n) => `${n} ${rangeText(p.ranges[n] ?? RECOVERY_RANGES[n])}`).join(', ')}.`);
console.log('');

// ---- 1. parameter recovery on the simulator's task --------------------------------------------
console.log(`## 1. Parameter recovery, combined model 'q-ck', ${nTrials} trials (simulateChoices on the simulator's task)\n`);
console.log('"ceiling" = approximate information ceiling of r from the fits\' standard errors (see the script): r near it means the data, not the estimator, limit recovery. It is not computed for EB, whose SDs are posterior SDs that already include the population prior.\n');
const mapByPopulation = new Map<string, ParameterRecovery>();
const ebByPopulation = new Map<string, ParameterRecovery>();
for (const pop of POPULATIONS) {
  console.log(`### ${pop.label}\n`);
  console.log('| parameter | true range | estimator | Pearson r | Spearman ρ | bias | RMSE | fits at bound | ceiling | r ≥ 0.9 |\n|---|---|---|---|---|---|---|---|---|---|');
  const notes: string[] = [];
  const rows: string[][] = NAMES.map(() => []);
  for (const est of RECOVERY_ESTIMATORS) {
    const t0 = performance.now();
    const res = await parameterRecovery({ model: 'q-ck', nAgents, nTrials, starts, workers, seed, ranges: pop.ranges, drawScale: pop.drawScale, ...est.options });
    if (est.label === 'MAP') mapByPopulation.set(pop.key, res);
    if (est.label === 'EB') ebByPopulation.set(pop.key, res);
    const eb = res.estimator === 'empirical-bayes';
    res.paramNames.forEach((p, j) => {
      rows[j]!.push(`| ${p} | ${rangeText(res.ranges[j]!)} | ${est.label} | ${f3(res.correlation[j]!)} | ${f3(res.rankCorrelation[j]!)} | ${f3(res.bias[j]!)} | ${f3(res.rmse[j]!)} | ${res.nAtBound[j]} | ${eb ? '—' : f3(ceiling(res, j))} | ${res.correlation[j]! >= TARGET ? 'yes' : 'no'} |`);
    });
    const conv = res.converged.reduce((a, b) => a + b, 0);
    const single = Array.from(res.nAtBest).filter((x) => x === 1).length;
    const em = res.population ? `, EM ${res.population.iterations} iterations (${res.population.converged ? 'converged' : 'NOT converged'}), iBIC ${res.population.ibic.toFixed(1)}` : '';
    notes.push(`${est.label}: ${((performance.now() - t0) / 1000).toFixed(1)} s on ${res.workersUsed} thread(s)${eb ? ' (per-agent initial fits; the EM on one)' : ''}, ${conv}/${nAgents} fits converged, ${single} with a single start at the best${em}; warnings: ${res.warnings.map((w) => w.code).join(', ') || 'none'}`);
  }
  console.log(rows.flat().join('\n'));
  console.log(`\n${notes.join('. ')}.\n`);
  const res = mapByPopulation.get(pop.key)!;
  console.log('Correlations among the MAP-fitted parameters (true parameters are drawn independently):\n');
  console.log(matrixTable(res.fittedCorrelation, res.paramNames, res.paramNames));
  const eb = ebByPopulation.get(pop.key)!;
  const pr = eb.population!.prior;
  console.log('\nEB: fitted population prior (natural scale) vs the true draw range:\n');
  console.log('| parameter | true range | prior median | prior 95 % range | prior SD (transformed) | at floor |\n|---|---|---|---|---|---|');
  pr.paramNames.forEach((p, j) => console.log(`| ${p} | ${rangeText(eb.ranges[j]!)} | ${f3(pr.median[j]!)} | ${rangeText([pr.lower[j]!, pr.upper[j]!])} | ${f3(Math.sqrt(pr.variance[j]!))} | ${pr.atFloor[j] ? 'yes' : 'no'} |`));
  console.log('\nCorrelations among the EB-fitted parameters:\n');
  console.log(matrixTable(eb.fittedCorrelation, eb.paramNames, eb.paramNames));
  console.log('');
}

// ---- 2. trials needed -------------------------------------------------------------------------
if (scaling.length > 0) {
  console.log(`## 2. Pearson r against the number of trials (MAP and EB, ${nAgents} agents, same seeds)\n`);
  console.log(`| population | trials | estimator | ${NAMES.join(' | ')} | all ≥ 0.9 | seconds |\n|---|---|---|${NAMES.map(() => '---').join('|')}|---|---|`);
  for (const key of ['centred', 'narrow']) {
    const pop = POPULATIONS.find((p) => p.key === key)!;
    const rowOf = (T: number, label: string, r: ArrayLike<number>, sec: string) => `| ${key} | ${T} | ${label} | ${NAMES.map((_, j) => f3(r[j]!)).join(' | ')} | ${Array.from(r).every((x) => x >= TARGET) ? 'yes' : 'no'} | ${sec} |`;
    console.log(rowOf(nTrials, 'MAP', mapByPopulation.get(key)!.correlation, '(section 1)'));
    console.log(rowOf(nTrials, 'EB', ebByPopulation.get(key)!.correlation, '(section 1)'));
    for (const T of scaling) {
      for (const est of RECOVERY_ESTIMATORS.filter((e) => e.label !== 'ML')) {
        const t0 = performance.now();
        const res = await parameterRecovery({ model: 'q-ck', nAgents, nTrials: T, starts, workers, seed, ranges: pop.ranges, drawScale: pop.drawScale, ...est.options });
        console.log(rowOf(T, est.label, res.correlation, ((performance.now() - t0) / 1000).toFixed(1)));
      }
    }
  }
  console.log('');
}

// ---- 3. the simulator's own agent -------------------------------------------------------------
type Params = Record<(typeof NAMES)[number], number>;
type SessionFit = { truth: Params; fitted: Float64Array[]; rpe: number[]; ape: number[]; switches: number };
/** One simulateSession session (first nTrials trials) fitted by each estimator. */
function sessionFit(p: Params, simSeed: number, fitSeed: number): SessionFit {
  // ~7.5 s per trial in the simulated task: ask for enough session time for nTrials trials.
  const sim = simulateSession({ durationSec: Math.ceil(nTrials * 11.5), photometryRate: 1, nSites: 0, nUnits: 0, accelRate: 20, ...p, seed: simSeed });
  const tr = sim.session.trials!;
  const n = Math.min(nTrials, tr.choice.length);
  const data = { choice: tr.choice.subarray(0, n), reward: tr.reward.subarray(0, n) };
  let switches = 0;
  for (let t = 1; t < n; t++) if (data.choice[t] !== data.choice[t - 1]) switches++;
  const out: SessionFit = { truth: p, fitted: [], rpe: [], ape: [], switches };
  for (const est of ESTIMATORS) {
    const fit = fitChoiceModel(data, { model: 'q-ck', starts, seed: fitSeed, priors: est.priors });
    const reg = choiceRegressors(data, fit.params, { model: 'q-ck' });
    out.fitted.push(fit.estimates);
    out.rpe.push(pearson(reg.rpe, sim.truth.rpe.subarray(0, n)));
    out.ape.push(pearson(reg.ape, sim.truth.ape.subarray(0, n)));
  }
  return out;
}
function errorSummary(fits: readonly SessionFit[]): string {
  const lines = ['| estimator | regressor | min | 5th pct | median | agents with r ≥ 0.95 |', '|---|---|---|---|---|---|'];
  ESTIMATORS.forEach((est, e) => {
    for (const kind of ['rpe', 'ape'] as const) {
      const r = fits.map((f) => f[kind][e]!);
      lines.push(`| ${est.label} | ${kind.toUpperCase()} | ${f3(Math.min(...r))} | ${f3(quantile(r, 0.05))} | ${f3(quantile(r, 0.5))} | ${r.filter((x) => x >= 0.95).length}/${r.length} |`);
    }
  });
  return lines.join('\n');
}
function recoverySummary(fits: readonly SessionFit[]): string {
  const lines = [`| estimator | ${NAMES.join(' | ')} |`, `|---|${NAMES.map(() => '---').join('|')}|`];
  ESTIMATORS.forEach((est, e) => {
    lines.push(`| ${est.label} | ${NAMES.map((nm, j) => f3(pearson(fits.map((f) => f.truth[nm]), fits.map((f) => f.fitted[e]![j]!)))).join(' | ')} |`);
  });
  return lines.join('\n');
}

console.log(`## 3. Sessions from @tuningfork/simulate's agent (simulateSession, first ${nTrials} trials; this section runs on one thread)\n`);
{
  // 3a. Same model? Run learning's regressors with the TRUE parameters on a simulated session.
  const sim = simulateSession({ durationSec: Math.ceil(nTrials * 11.5), photometryRate: 1, nSites: 0, nUnits: 0, accelRate: 20, seed: 999 });
  const tr = sim.session.trials!;
  const reg = choiceRegressors(tr, { alpha: DEF.alpha, beta: DEF.beta, alphaC: DEF.alphaC, betaC: DEF.betaC }, { model: 'q-ck' });
  const maxDiff = (a: ArrayLike<number>, b: ArrayLike<number>) => {
    let m = 0;
    for (let i = 0; i < a.length; i++) m = Math.max(m, Math.abs(a[i]! - b[i]!));
    return m;
  };
  console.log(`### 3a. Model equivalence (${tr.choice.length} trials at the defaults, true parameters)\n`);
  console.log(`learning's choiceRegressors vs the simulator's truth: max |Δ| RPE ${maxDiff(reg.rpe, sim.truth.rpe).toExponential(1)}, APE ${maxDiff(reg.ape, sim.truth.ape).toExponential(1)}, Q(c) ${maxDiff(reg.qChosen, sim.truth.qChosen).toExponential(1)}, P(choice) ${maxDiff(reg.pChoice, sim.truth.pChoice).toExponential(1)}: same agent, same initial values, same update order and trials.\n`);
}
{
  const t0 = performance.now();
  const fits: SessionFit[] = [];
  for (let a = 0; a < nAgents; a++) fits.push(sessionFit(DEF, 1000 + a, a));
  console.log(`### 3b. At exactly the simulator's default parameters (${nAgents} sessions, seeds 1000…)\n`);
  console.log('Per-trial correlation of fitted vs true regressors, per session:\n');
  console.log(errorSummary(fits));
  console.log('\nFitted parameters (median [10th, 90th percentile]) vs the truth:\n');
  console.log(`| estimator | ${NAMES.map((n) => `${n} (true ${DEF[n]})`).join(' | ')} |\n|---|${NAMES.map(() => '---').join('|')}|`);
  ESTIMATORS.forEach((est, e) => {
    console.log(`| ${est.label} | ${NAMES.map((_, j) => {
      const v = fits.map((f) => f.fitted[e]![j]!);
      return `${f2(quantile(v, 0.5))} [${f2(quantile(v, 0.1))}, ${f2(quantile(v, 0.9))}]`;
    }).join(' | ')} |`);
  });
  console.log(`\n${((performance.now() - t0) / 1000).toFixed(1)} s\n`);
}
for (const key of ['centred', 'wide']) {
  const t0 = performance.now();
  const pop = POPULATIONS.find((p) => p.key === key)!;
  const root = rng(seed);
  const fits: SessionFit[] = [];
  for (let a = 0; a < nAgents; a++) {
    const r = root.stream(a);
    const p = Object.fromEntries(
      NAMES.map((n) => {
        const [lo, hi] = pop.ranges[n] ?? RECOVERY_RANGES[n];
        const u = r.uniform();
        if (pop.drawScale === 'natural' || n === 'betaC') return [n, lo + u * (hi - lo)];
        if (n === 'beta') return [n, Math.exp(Math.log(lo) + u * (Math.log(hi) - Math.log(lo)))];
        return [n, logistic(logit(lo) + u * (logit(hi) - logit(lo)))];
      }),
    ) as Params;
    fits.push(sessionFit(p, 1000 + a, a));
  }
  console.log(`### 3${key === 'centred' ? 'c' : 'd'}. Population "${key}" (${nAgents} agents)\n`);
  console.log('Pearson r of true vs fitted parameters:\n');
  console.log(recoverySummary(fits));
  console.log('\nPer-trial correlation of fitted vs true regressors, per agent:\n');
  console.log(errorSummary(fits));
  const worst = fits.reduce((w, f) => (f.ape[0]! < w.ape[0]! ? f : w));
  const wi = fits.indexOf(worst);
  console.log(`\nLowest ML r(APE): agent ${wi}, ${worst.switches} switches in ${nTrials} trials; true α ${f2(worst.truth.alpha)}, β ${f2(worst.truth.beta)}, α_C ${f2(worst.truth.alphaC)}, β_C ${f2(worst.truth.betaC)}; ML fit ${Array.from(worst.fitted[0]!, f2).join(', ')}; MAP fit ${Array.from(worst.fitted[1]!, f2).join(', ')}; r(APE) ML ${f3(worst.ape[0]!)}, MAP ${f3(worst.ape[1]!)}.`);
  console.log(`${((performance.now() - t0) / 1000).toFixed(1)} s\n`);
}

// ---- 4. model recovery -----------------------------------------------------------------------
const perModel = Math.max(10, Math.round(nAgents / 2.5));
console.log(`## 4. Model recovery (${perModel} agents per model, ML fits, 10 starts, library default ranges)\n`);
for (const criterion of ['bic', 'aic'] as const) {
  const t0 = performance.now();
  const res = await modelRecovery({ models: ['bias', 'wsls', 'q', 'ck', 'q-ck'], agentsPerModel: perModel, nTrials, starts: 10, workers, seed, criterion });
  console.log(`### ${criterion.toUpperCase()}: ${(100 * res.accuracy).toFixed(1)} % of agents best fitted by their generating model (target ≥ 80 %)\n`);
  console.log('Confusion matrix p(best fit | generator) — rows: generator, columns: fitted model\n');
  console.log(matrixTable(res.confusion, res.models, res.models));
  console.log('\nInversion matrix p(generator | best fit) — rows: generator, columns: fitted model\n');
  console.log(matrixTable(res.inversion, res.models, res.models));
  console.log(`\n${((performance.now() - t0) / 1000).toFixed(1)} s on ${res.workersUsed} thread(s)\n`);
}
