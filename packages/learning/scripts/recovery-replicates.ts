// How much a recovery correlation moves between replicate populations: the parameter-recovery run
// of recovery-study.ts section 1 (combined model 'q-ck', one estimator, one population of agents)
// repeated for several seeds, with the mean, sd and range of Pearson r per parameter and how many
// replicates pass r ≥ 0.9. One population of 50 agents is one draw; a criterion near its value
// needs the spread across draws to be read.
//
//   npx tsx --conditions=@tuningfork/source packages/learning/scripts/recovery-replicates.ts \
//       [--population centred|wide|narrow] [--estimator empirical-bayes|map|ml] [--trials 500]
//       [--agents 50] [--seeds 1-10] [--starts 20] [--workers 2]
//
// ≈ 12 s per replicate at 500 trials on 2 cores (EB). Everything is seeded.
import { parameterRecovery } from '@tuningfork/learning';
import type { ParameterRecoveryOptions } from '@tuningfork/learning';
import { NAMES, POPULATIONS } from './populations.js';

function arg(name: string, fallback: string): string {
  const i = process.argv.indexOf(`--${name}`);
  return i >= 0 ? process.argv[i + 1]! : fallback;
}
const popKey = arg('population', 'centred');
const estimator = arg('estimator', 'empirical-bayes');
const nTrials = Number(arg('trials', '500'));
const nAgents = Number(arg('agents', '50'));
const starts = Number(arg('starts', '20'));
const workers = Number(arg('workers', '2'));
const [s0, s1] = arg('seeds', '1-10').split('-').map(Number) as [number, number];
const pop = POPULATIONS.find((p) => p.key === popKey);
if (!pop) throw new Error(`unknown population '${popKey}'; one of ${POPULATIONS.map((p) => p.key).join(', ')}`);
const est: Pick<ParameterRecoveryOptions, 'priors' | 'estimator'> =
  estimator === 'empirical-bayes' ? { estimator: 'empirical-bayes' } : estimator === 'map' ? { priors: 'weakly-informative' } : { priors: 'none' };
const TARGET = 0.9;

console.log(`# Recovery replicates — population ${pop.key}, estimator ${estimator}, ${nAgents} agents × ${nTrials} trials, seeds ${s0}–${s1}\n`);
console.log(`| seed | ${NAMES.join(' | ')} | all ≥ ${TARGET} | seconds |\n|---|${NAMES.map(() => '---').join('|')}|---|---|`);
const rs: number[][] = [];
for (let seed = s0; seed <= s1; seed++) {
  const t0 = performance.now();
  const res = await parameterRecovery({ model: 'q-ck', nAgents, nTrials, starts, workers, seed, ranges: pop.ranges, drawScale: pop.drawScale, ...est });
  const r = NAMES.map((n) => res.correlation[res.paramNames.indexOf(n)]!);
  rs.push(r);
  console.log(`| ${seed} | ${r.map((x) => x.toFixed(3)).join(' | ')} | ${r.every((x) => x >= TARGET) ? 'yes' : 'no'} | ${((performance.now() - t0) / 1000).toFixed(1)} |`);
}
const col = (j: number) => rs.map((r) => r[j]!);
const mean = (x: number[]) => x.reduce((a, b) => a + b, 0) / x.length;
const sd = (x: number[]) => Math.sqrt(x.reduce((a, b) => a + (b - mean(x)) ** 2, 0) / Math.max(1, x.length - 1));
console.log(`\n| | ${NAMES.join(' | ')} |\n|---|${NAMES.map(() => '---').join('|')}|`);
console.log(`| mean r | ${NAMES.map((_, j) => mean(col(j)).toFixed(3)).join(' | ')} |`);
console.log(`| sd | ${NAMES.map((_, j) => sd(col(j)).toFixed(3)).join(' | ')} |`);
console.log(`| min – max | ${NAMES.map((_, j) => `${Math.min(...col(j)).toFixed(3)} – ${Math.max(...col(j)).toFixed(3)}`).join(' | ')} |`);
console.log(`| replicates with r ≥ ${TARGET} | ${NAMES.map((_, j) => `${col(j).filter((x) => x >= TARGET).length}/${rs.length}`).join(' | ')} |`);
console.log(`\nAll four ≥ ${TARGET} in ${rs.filter((r) => r.every((x) => x >= TARGET)).length}/${rs.length} replicates.`);
