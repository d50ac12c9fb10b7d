// Benchmarks of @tuningfork/learning (run against the built dist/: `npx tsc -b && node bench/run.mjs learning`).
// Targets (issue 6): fitting the 4-parameter combined model to 1,000 trials with 20 starts ≤ 1 s (by
// maximum likelihood and by MAP with the weakly informative priors); parameter recovery of 50 agents
// ≤ 30 s using both cores (default 20 starts per fit). The peer comparison times the numpy/scipy
// yardstick's `learning_model_fit` fit (../shared/peer/pipeline.py, fit_learning_model: L-BFGS-B,
// 5 starts, numerical gradients) against ours with 5 starts on the same trials. The hierarchical
// (empirical-Bayes) fit of 50 agents × 500 trials is timed without a target (none was set).
import { rng } from '@tuningfork/core';
import { spawnSync } from 'node:child_process';
import { existsSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import { RECOVERY_RANGES, fitChoiceModel, fitChoicePopulation, parameterRecovery, reversalSchedule, simulateChoices } from '@tuningfork/learning';
import { SIMULATE_DEFAULTS } from '@tuningfork/simulate';
import type { BenchCase, BenchRow } from '../harness.js';

// The simulator's default agent (α 0.3, β 2.5, α_C 0.3, β_C 2.5 at the time of writing).
const AGENT = { alpha: SIMULATE_DEFAULTS.alpha, beta: SIMULATE_DEFAULTS.beta, alphaC: SIMULATE_DEFAULTS.alphaC, betaC: SIMULATE_DEFAULTS.betaC };

function session(nTrials: number, seed: number) {
  const { schedule } = reversalSchedule({ nTrials, seed });
  return simulateChoices(schedule, AGENT, { model: 'q-ck', seed: seed + 1 });
}

/** 50 agents × 500 trials of q-ck, parameters uniform in RECOVERY_RANGES (the library's default population). */
function agents(nAgents: number, nTrials: number, seed: number) {
  const root = rng(seed);
  return Array.from({ length: nAgents }, (_, i) => {
    const r = root.stream(i);
    const draw = (name: 'alpha' | 'beta' | 'alphaC' | 'betaC') => {
      const [lo, hi] = RECOVERY_RANGES[name];
      return lo + (hi - lo) * r.uniform();
    };
    const params = { alpha: draw('alpha'), beta: draw('beta'), alphaC: draw('alphaC'), betaC: draw('betaC') };
    const { schedule } = reversalSchedule({ nTrials, seed: seed + 1000 + i });
    return simulateChoices(schedule, params, { model: 'q-ck', seed: seed + 2000 + i });
  });
}

function median(x: number[]): number {
  const s = [...x].sort((a, b) => a - b);
  const m = s.length >> 1;
  return s.length % 2 ? s[m]! : (s[m - 1]! + s[m]!) / 2;
}

const PEER = fileURLToPath(new URL('../../../shared/peer/pipeline.py', import.meta.url));

// Times the peer's own fit function on our trials, in one Python process (import not timed).
const PEER_SNIPPET = `
import json, sys, time, os
sys.path.insert(0, os.path.dirname(sys.argv[1]))
import pipeline
d = json.load(sys.stdin)
times = []
for _ in range(int(sys.argv[2])):
    t = time.perf_counter()
    x, ll, rpe, ape = pipeline.fit_learning_model(d["choice"], d["reward"])
    times.append(time.perf_counter() - t)
print(json.dumps({"times": times, "ll": ll, "x": [float(v) for v in x]}))
`;

export const cases: BenchCase[] = [
  {
    name: 'learning: fit q-ck (4 params), 20 starts',
    size: '1,000 trials, 2 options',
    setup: () => session(1000, 11),
    run: (s: ReturnType<typeof session>) => fitChoiceModel(s, { model: 'q-ck', starts: 20, seed: 1 }).nll,
    reps: 7,
    targetSec: 1,
  },
  {
    name: 'learning: fit q-ck (4 params), 20 starts, MAP (weakly informative priors)',
    size: '1,000 trials, 2 options',
    setup: () => session(1000, 11),
    run: (s: ReturnType<typeof session>) => fitChoiceModel(s, { model: 'q-ck', starts: 20, seed: 1, priors: 'weakly-informative' }).objective,
    reps: 7,
    targetSec: 1,
  },
  {
    name: 'learning: hierarchical (empirical-Bayes) fit q-ck, fitChoicePopulation',
    size: '50 agents × 500 trials, 20 starts per agent (initial fits + first E-step), one thread',
    setup: () => agents(50, 500, 31),
    run: (s: ReturnType<typeof agents>) => fitChoicePopulation(s, { model: 'q-ck', starts: 20, seed: 1 }).ibic,
    reps: 3,
  },
  {
    name: 'learning: parameter recovery q-ck, 2 workers vs 1 thread',
    size: '50 agents × 500 trials, 20 starts each',
    custom: async (): Promise<BenchRow[]> => {
      const rows: BenchRow[] = [];
      for (const workers of [2, 1]) {
        const times: number[] = [];
        let used = 0;
        for (let rep = 0; rep < 3; rep++) {
          const t = process.hrtime.bigint();
          const res = await parameterRecovery({ model: 'q-ck', nAgents: 50, nTrials: 500, starts: 20, seed: 1, workers });
          times.push(Number(process.hrtime.bigint() - t) / 1e9);
          used = res.workersUsed;
        }
        const med = median(times);
        const verdict = workers === 2 ? `${med <= 30 ? 'PASS' : 'FAIL'} (target ≤ 30 s); ` : '';
        rows.push({ operation: `learning: parameter recovery q-ck, workers: ${workers}`, size: '50 agents × 500 trials, 20 starts each', medianSec: med, note: `${verdict}${used} thread(s) used` });
      }
      return rows;
    },
  },
  {
    name: 'learning: learning_model_fit vs peer',
    size: '350 trials, q-ck, 5 starts',
    custom: (): BenchRow[] => {
      const s = session(350, 21);
      const reps = 5;
      const ours: number[] = [];
      for (let i = 0; i < reps + 1; i++) {
        const t = process.hrtime.bigint();
        fitChoiceModel(s, { model: 'q-ck', starts: 5, seed: 1 });
        if (i > 0) ours.push(Number(process.hrtime.bigint() - t) / 1e9); // first run warms up the JIT
      }
      const row: BenchRow = { operation: 'learning: learning_model_fit (ours, 5 starts)', size: '350 trials', medianSec: median(ours) };
      if (!existsSync(PEER)) return [{ ...row, note: 'peer absent (../shared/peer/pipeline.py): no ratio' }];
      const r = spawnSync('python3', ['-c', PEER_SNIPPET, PEER, String(reps)], {
        input: JSON.stringify({ choice: Array.from(s.choice), reward: Array.from(s.reward) }),
        encoding: 'utf8',
      });
      if (r.status !== 0) return [{ ...row, note: `peer failed: ${r.stderr.slice(0, 200)}` }];
      const peer = JSON.parse(r.stdout.trim().split('\n').pop()!) as { times: number[] };
      const p = median(peer.times);
      return [
        { ...row, note: `ratio ours/peer = ${(row.medianSec / p).toFixed(3)}` },
        { operation: 'learning: learning_model_fit (peer scipy L-BFGS-B, 5 starts)', size: '350 trials', medianSec: p, note: 'numpy/scipy yardstick' },
      ];
    },
  },
];
