// @tuningfork/learning — learning models fitted to behaviour: per-trial reward and action
// prediction errors.

// Cue–outcome learning
export { rescorlaWagner } from './rescorla-wagner.js';
export type { RescorlaWagnerOptions, RescorlaWagnerResult } from './rescorla-wagner.js';

// Temporal-difference learning and time representations
export { tdLambda } from './td/td-lambda.js';
export type { TdEpisode, TdLambdaOptions, TdLambdaResult } from './td/td-lambda.js';
export { microstimuli } from './td/microstimuli.js';
export type { MicrostimuliOptions } from './td/microstimuli.js';
export { tdWithinTrial } from './td/td-within-trial.js';
export type { TdTrials, TdWithinTrialOptions, TdWithinTrialResult } from './td/td-within-trial.js';

// Choice models: definitions and data
export { CHOICE_MODEL_NAMES, DEFAULT_BOUNDS, PARAM_DOMAIN, START_RANGES } from './choice/model.js';
export type { ChoiceModel, ChoiceModelName, ChoiceModelSpec, ChoiceParamName, ModelStructure, ParamTransform } from './choice/model.js';
export type { ChoiceData, ChoiceSession } from './choice/data.js';
export { WEAK_PRIORS } from './choice/priors.js';
export type { ChoicePriors, ParamPrior } from './choice/priors.js';

// Choice models: likelihood, fitting, regressors, simulation
export { choiceLogLikelihood } from './choice/choice-log-likelihood.js';
export type { ChoiceLogLikelihood, ChoiceLogLikelihoodOptions } from './choice/choice-log-likelihood.js';
export { fitChoiceModel, fitEachSession } from './choice/fit-choice-model.js';
export type { ChoiceModelFit, FitChoiceModelOptions } from './choice/fit-choice-model.js';
export { fitChoicePopulation } from './choice/fit-choice-population.js';
export type { ChoicePopulationFit, FitChoicePopulationOptions, GaussianPriorSpec, PopulationPrior } from './choice/fit-choice-population.js';
export type { FitStarts } from './internal/fit-core.js';
export { choiceRegressors } from './choice/choice-regressors.js';
export type { ChoiceRegressors, ChoiceRegressorsOptions } from './choice/choice-regressors.js';
export { regressorTable } from './choice/regressor-table.js';
export { simulateChoices } from './choice/simulate-choices.js';
export type { SimulateChoicesOptions, SimulatedChoices } from './choice/simulate-choices.js';
export { reversalSchedule } from './choice/reversal-schedule.js';
export type { ReversalSchedule, ReversalScheduleOptions } from './choice/reversal-schedule.js';

// Validation (Wilson & Collins 2019)
export { parameterRecovery } from './recovery/parameter-recovery.js';
export type { ParameterRecovery, ParameterRecoveryOptions, RecoveryPopulation } from './recovery/parameter-recovery.js';
export { modelRecovery } from './recovery/model-recovery.js';
export type { ModelRecovery, ModelRecoveryOptions } from './recovery/model-recovery.js';
export { RECOVERY_RANGES } from './recovery/recovery-options.js';
