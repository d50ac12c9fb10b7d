// Filter design
export { butterworth, chebyshev1 } from './filter/design.js';
export type { IirFilter, FilterType, ButterworthOptions, Chebyshev1Options } from './filter/design.js';

// Causal and zero-phase filtering
export { sosfilt, sosfiltZi, lfilter, lfilterZi } from './filter/iir-filter.js';
export type { IirFilterOptions, IirFilterResult } from './filter/iir-filter.js';
export { sosfiltfilt, filtfilt, zeroPhasePlan } from './filter/zero-phase.js';
export type { PadType, ZeroPhaseOptions, ZeroPhasePlan } from './filter/zero-phase.js';
export { filterSignal } from './filter/filter-signal.js';
export type { FilterSignalOptions, FilterSignalResult } from './filter/filter-signal.js';
export type { SosInput } from './internal/sos-input.js';

// Resampling
export { decimate } from './filter/decimate.js';
export type { DecimateOptions } from './filter/decimate.js';
export { toUniform } from './filter/to-uniform.js';
export type { ToUniformOptions, ToUniformResult, TimestampGap } from './filter/to-uniform.js';

// Demodulation
export { lockInDemodulate } from './demod/lock-in.js';
export type { LockInOptions, LockInResult, LockInChannel } from './demod/lock-in.js';
export { demultiplexFrames } from './demod/demultiplex.js';
export type { DemultiplexOptions, DemultiplexResult } from './demod/demultiplex.js';

// Photobleaching
export { fitExponentialDecay, evaluateExponential } from './bleaching/fit-exponential.js';
export type { ExponentialFitOptions, ExponentialFit } from './bleaching/fit-exponential.js';
export { estimateBleaching } from './bleaching/estimate-bleaching.js';
export { airPls, whittakerLambda } from './bleaching/air-pls.js';
export type { AirPlsOptions, AirPlsResult } from './bleaching/air-pls.js';
export type { BleachingOptions, BleachingEstimate } from './bleaching/estimate-bleaching.js';

// Isosbestic correction, ΔF/F, z-scores
export { fitControl } from './correction/fit-control.js';
export type { FitControlOptions, ControlFit, ControlFitMethod } from './correction/fit-control.js';
export { deltaFOverF } from './correction/delta-f-over-f.js';
export type { DeltaFOverF } from './correction/delta-f-over-f.js';
export { zScore, MAD_TO_SD } from './correction/z-score.js';
export type { ZScoreOptions, ZScoreResult } from './correction/z-score.js';
export { conditionSite } from './correction/condition-site.js';
export type { ConditionSiteOptions, ConditionedSite } from './correction/condition-site.js';

// Quality control and spectra
export { welch } from './qc/welch.js';
export type { WelchOptions, PowerSpectrum } from './qc/welch.js';
export { findSpectralPeaks } from './qc/spectral-peaks.js';
export type { SpectralPeakOptions, SpectralPeak } from './qc/spectral-peaks.js';
export { findClipping } from './qc/clipping.js';
export type { ClippingOptions, ClippingReport, ClipRun } from './qc/clipping.js';
export { checkTimestamps } from './qc/check-timestamps.js';
export type { CheckTimestampsOptions, TimestampReport } from './qc/check-timestamps.js';
export { estimateSnr } from './qc/estimate-snr.js';
export type { SnrOptions, SnrEstimate } from './qc/estimate-snr.js';
export { siteQuality } from './qc/site-quality.js';
export type { SiteQualityOptions, SiteQuality, ChannelQuality } from './qc/site-quality.js';

// Spike trains
export { binSpikes } from './spikes/bin-spikes.js';
export type { BinSpikesOptions, BinnedSpikes } from './spikes/bin-spikes.js';
export { gaussianSmooth, causalSmooth } from './spikes/smooth.js';
export type { SmoothMode, GaussianSmoothOptions, CausalSmoothOptions, CausalSmoothResult } from './spikes/smooth.js';
export { unitQuality, refractoryContamination } from './spikes/unit-quality.js';
export type { UnitQualityOptions, UnitQuality, RefractoryCounts, ContaminationEstimate } from './spikes/unit-quality.js';

// Dense linear algebra (shared with later stages)
export { leastSquaresQR } from './linalg/least-squares-qr.js';
export type { LeastSquaresOptions, LeastSquaresResult } from './linalg/least-squares-qr.js';
export { householderQR } from './linalg/householder-qr.js';
export type { QRFactorization } from './linalg/householder-qr.js';
export { solveLinear } from './linalg/solve-linear.js';
