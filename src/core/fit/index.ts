export { linearLeastSquares, polyval } from './linearLeastSquares.js';
export type { LinearFit, LinearFitOptions } from './linearLeastSquares.js';
export { levenbergMarquardt } from './levenbergMarquardt.js';
export type { LevenbergMarquardtOptions, NonlinearFit } from './levenbergMarquardt.js';
export { invertSymmetric, invertSymmetricFlat, solve } from './matrix.js';
