// Bases and design matrices
export { raisedCosineBasis } from './basis/raised-cosine-basis.js';
export type { RaisedCosineBasisOptions, RaisedCosineBasis } from './basis/raised-cosine-basis.js';
export { designMatrix, designToMatrix } from './design/design-matrix.js';
export type { EventRegressor, CovariateRegressor, Regressor, DesignMatrixOptions, DesignTerm, EncodingDesign } from './design/design-matrix.js';
export { matrixDesign } from './design/matrix-design.js';
export type { MatrixDesignOptions } from './design/matrix-design.js';

// Cross-validation and ridge
export { blockedFolds } from './cv/blocked-folds.js';
export type { BlockedFoldsOptions, FoldLayout } from './cv/blocked-folds.js';
export { ridgeRegression } from './ridge/ridge-regression.js';
export type { RidgeRegressionOptions, RidgeRegressionResult } from './ridge/ridge-regression.js';
export { fitRidgeCV } from './ridge/fit-ridge-cv.js';
export type { FitRidgeCVOptions, RidgeCellFit, RidgeCVResult } from './ridge/fit-ridge-cv.js';
export type { CellSignal } from './ridge/prepare.js';
export type { KernelEstimate } from './ridge/kernels.js';

// Shift nulls
export { shiftNull } from './null/shift-null.js';
export type { ShiftNullOptions, ShiftNullCell, ShiftNullResult } from './null/shift-null.js';
export { shiftCrossProducts } from './null/shift-cross-products.js';
export type { ShiftCrossProductsOptions } from './null/shift-cross-products.js';

// Poisson GLM
export { fitPoissonGLM } from './glm/fit-poisson-glm.js';
export type { FitPoissonGLMOptions, PoissonGLMResult } from './glm/fit-poisson-glm.js';
export { poissonGLMCV } from './glm/poisson-glm-cv.js';
export type { PoissonGLMCVOptions, PoissonCellFit, PoissonGLMCVResult } from './glm/poisson-glm-cv.js';

// Classification and the whole analysis
export { classifyCells } from './classify/classify-cells.js';
export type { TuningClass, GroupRole, ClassifyCellsOptions, CellClassification, ClassifyCellsResult } from './classify/classify-cells.js';
export { encodeCells } from './encode-cells.js';
export type { EncodeCellsOptions, EncodeCellsResult } from './encode-cells.js';
