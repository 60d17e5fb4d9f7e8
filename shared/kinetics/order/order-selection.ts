import type { IntegerOrder } from '../types.ts';
import type { FTestResult } from './extra-sum-of-squares-f-test.ts';
import type { RateLawFit } from './fit-rate-law.ts';

/** What `selectOrder` returns: the order decision and every figure it rests on. */
export type ModelFits = readonly [RateLawFit | null, RateLawFit | null, RateLawFit | null, RateLawFit | null];

export interface OrderSelection {
  selectedOrder: IntegerOrder | null;
  /** Lowest-AICc integer law (or lowest RSS when AICc is undefined), whether or not it is named. */
  bestIntegerOrder: IntegerOrder | null;
  verdict: string;
  /** AICc for orders 0, 1, 2 and the free order, in that order. */
  aicc: (number | null)[];
  /** Akaike weights over all four laws. */
  weights: (number | null)[];
  /** Akaike weights over the three integer laws only (the decision uses these). */
  integerWeights: (number | null)[];
  deltaAiccToRunnerUp: number | null;
  runnerUpOrder: IntegerOrder | null;
  /** F test of each integer order against the free-order fit. */
  fTests: (FTestResult | null)[];
  fractionReacted: number | null;
  halfLivesCovered: number | null;
  /** Largest difference between the best and runner-up integer curves at the measured times. */
  curveSeparation: number | null;
  /** Residual SD of the best integer law (original scale for 'constant', ln scale for 'proportional'). */
  residualStandardDeviation: number | null;
  runsTestP: number | null;
  /** Free-order estimate of n with its interval (null when that fit is unavailable). */
  freeOrder: { n: number; ci: [number, number] | null } | null;
}
