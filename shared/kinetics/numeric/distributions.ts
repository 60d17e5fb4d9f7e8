/**
 * The probability distributions the kinetics engine uses, gathered in one import.
 * Each function lives in its own file with its own documentation and tests.
 */
export { chiSquareUpperTail } from './chi-square-upper-tail.ts';
export { fDistributionUpperTail } from './f-distribution-upper-tail.ts';
export { normalQuantile } from './normal-quantile.ts';
export { studentTCdf } from './student-t-cdf.ts';
export { studentTQuantile } from './student-t-quantile.ts';
