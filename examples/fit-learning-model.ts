/**
 * Fit the learning model (Q-learning with a choice kernel) to an animal's choices and export
 * per-trial reward and action prediction errors for the encoding models.
 *
 * Run:  npm run build && npx tsx examples/fit-learning-model.ts [out-dir]
 */
import { join } from 'node:path';
import { pathToFileURL } from 'node:url';
import { writeCsv } from '@tuningfork/io';
import { choiceRegressors, fitChoiceModel } from '@tuningfork/learning';
import { simulateSession } from '@tuningfork/simulate';

export async function main(outDir = 'example-output', durationSec = 3600): Promise<{ params: Readonly<Record<string, number>>; trials: number; file: string }> {
  const { session } = simulateSession({ durationSec, nSites: 0, nUnits: 0, seed: 5 });
  const trials = session.trials!; // or io.readTrials('trials.csv')

  // Maximum likelihood over 20 seeded starts; standard errors from the Hessian; AIC/BIC.
  const fit = fitChoiceModel({ choice: trials.choice, reward: trials.reward }, { model: 'q-ck', starts: 20, seed: 1 });
  fit.paramNames.forEach((p, i) => console.log(`${p} = ${fit.estimates[i]!.toFixed(3)} ± ${fit.se[i]!.toFixed(3)}`));
  console.log(`NLL ${fit.nll.toFixed(2)}, AIC ${fit.aic.toFixed(1)}, BIC ${fit.bic.toFixed(1)}, ${fit.nAtBest}/${fit.nStarts} starts at the best`);

  // Per-trial regressors, all taken before each trial's update.
  const reg = choiceRegressors({ choice: trials.choice, reward: trials.reward }, fit.params, { model: fit.model });
  const file = join(outDir, 'trial-regressors.csv');
  await writeCsv(file, { trial: Float64Array.from(reg.trial), choice: Float64Array.from(reg.choice), reward: reg.outcome, rpe: reg.rpe, ape: reg.ape, q_chosen: reg.qChosen, p_choice: reg.pChoice });
  console.log(`wrote ${file}`);
  return { params: fit.params, trials: reg.trial.length, file };
}

if (import.meta.url === pathToFileURL(process.argv[1] ?? '').href) await main(process.argv[2]);
