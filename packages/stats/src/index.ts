// Bootstrap of trials × time matrices (one condition, a difference, nested data)
export { bootstrapTimecourse, bootstrapTimecourseDifference } from './bootstrap/bootstrap-timecourse.js';
export type {
  BootstrapTimecourseOptions, TimecourseInterval, TimecourseStatistic, MomentStatistic,
} from './bootstrap/bootstrap-timecourse.js';
export { hierarchicalBootstrap, hierarchicalBootstrapDifference } from './bootstrap/hierarchical-bootstrap.js';
export type {
  NestedTrials, NestedLevel, HierarchicalBootstrapOptions, HierarchicalInterval,
} from './bootstrap/hierarchical-bootstrap.js';

// Bootstrap of one statistic, jackknife, intervals from given replicates
export { bootstrapStatistic, intervalFromReplicates } from './bootstrap/bootstrap-statistic.js';
export type { BootstrapStatisticOptions, StatisticInterval, IntervalFromReplicatesOptions } from './bootstrap/bootstrap-statistic.js';
export { jackknife } from './bootstrap/jackknife.js';
export type { JackknifeResult, SampleStatistic } from './bootstrap/jackknife.js';

// Significance over time
export { permutationTimecourse } from './significance/permutation-timecourse.js';
export type { PermutationTimecourseOptions, PermutationTimecourseResult, Alternative } from './significance/permutation-timecourse.js';
export { clusterPermutationTest } from './significance/cluster-permutation-test.js';
export type { ClusterPermutationOptions, ClusterPermutationResult, TimeCluster } from './significance/cluster-permutation-test.js';
export { consecutiveThresholdRuns, significantRunsFromInterval, significantRunsFromPValues } from './significance/significant-runs.js';
export type {
  SignificantRun, SignificantRunsResult, ConsecutiveRunOptions, IntervalRunOptions, PValueRunOptions, BandLike,
} from './significance/significant-runs.js';
export { monteCarloPValue } from './significance/monte-carlo-p-value.js';

// Multiple comparisons
export { adjustPValues, rejectHypotheses } from './multiple/adjust-p-values.js';
export type { AdjustMethod, AdjustPValuesOptions, RejectHypothesesOptions, RejectionResult } from './multiple/adjust-p-values.js';

// Response summaries
export { responseSummary } from './summaries/response-summary.js';
export type { ResponseSummaryOptions, ResponseSummary, EstimateWithInterval } from './summaries/response-summary.js';

// Distributions
export { normalCdf, normalQuantile, normalDensity } from './distributions/normal.js';
export { studentTCdf, studentTQuantile } from './distributions/student-t.js';
