import { KineticsError } from '../numeric/kinetics-error.ts';
import { linearLeastSquares } from '../numeric/linear-least-squares.ts';
import type { AttributeDirection } from '../types.ts';
import { type AncovaModel, ancovaDesign } from './ancova-design.ts';
import { type LineShelfLife, lineShelfLife, withGrid } from './line-shelf-life.ts';
import {
  type PoolabilityResult,
  poolabilityOfTransformed,
  Q1E_POOLABILITY_SIGNIFICANCE,
} from './poolability.ts';
import { q1eAcceptanceLimits } from './q1e-acceptance-limits.ts';
import type { StabilityBatch, StabilityTransform, TransformedBatch } from './stability-batch.ts';
import { lineFromAncova, lineOfSingleBatch, type StabilityLine } from './stability-line.ts';
import { transformedStabilityBatches } from './transformed-stability-batches.ts';

/** Default search horizon: this multiple of the longest observed time (twice Q1E's largest cap, 2X). */
export const DEFAULT_HORIZON_MULTIPLE = 4;
const DEFAULT_GRID_POINTS = 41;

export interface Q1eShelfLifeOptions {
  lowerLimit?: number;
  upperLimit?: number;
  direction: AttributeDirection;
  /** 'none' (zero order), 'ln' (first order) or '1/x' (second order). */
  transform: StabilityTransform;
  /** Default 0.95: one-sided for 'decreasing'/'increasing', two-sided for 'either'. */
  confidence?: number;
  /** Poolability significance; default 0.25. */
  significance?: number;
  /** Latest time searched for a crossing; default 4 × the longest observed time. */
  horizon?: number;
  /** Residual variance of non-poolable batches: each batch's own (default) or pooled over batches. */
  separateBatchVariance?: 'individual' | 'pooled';
  /** Points per plotted line; default 41. */
  gridPoints?: number;
}

/** Result of `q1eShelfLife`; JSON-serialisable, no NaN or Infinity. */
export interface Q1eShelfLife {
  method: {
    transform: StabilityTransform;
    direction: AttributeDirection;
    confidence: number;
    sidedness: 'one-sided' | 'two-sided';
    quantileLevel: number;
    significance: number;
    separateBatchVariance: 'individual' | 'pooled';
    notes: string[];
  };
  model: AncovaModel | 'single-batch';
  poolability: PoolabilityResult | null;
  poolabilityNotApplicableReason: string | null;
  lines: LineShelfLife[];
  /** Earliest crossing over all lines (the worst batch), or null when none within the horizon. */
  shelfLife: number | null;
  status: LineShelfLife['status'];
  limitingLine: string | null;
  reason: string;
  horizon: number;
  extrapolation: {
    longestObservedTime: number;
    beyondObservedData: boolean | null;
  };
}

function fittedLines(
  batches: readonly TransformedBatch[],
  model: AncovaModel | 'single-batch',
  separateBatchVariance: 'individual' | 'pooled',
): StabilityLine[] {
  if (model === 'single-batch' || (model === 'separate' && separateBatchVariance === 'individual')) {
    return batches.map(lineOfSingleBatch);
  }
  const design = ancovaDesign(batches, model);
  const fit = linearLeastSquares(design.rows, design.response, { hasIntercept: true });
  if (model === 'pooled') {
    return [lineFromAncova(fit, design, 0, 'pooled')];
  }
  return batches.map((batch, index) => lineFromAncova(fit, design, index, batch.batch));
}

/**
 * ICH Q1E shelf life of one storage condition from one or several batches: the earliest time at
 * which the confidence limit of the mean regression line meets the acceptance criterion.
 *
 * Why: Q1A(R2) 2.2.9 and Q1E App. B set the shelf life where the one-sided 95 % confidence limit
 * of the mean curve (lower for a decreasing attribute, upper for an increasing one; two-sided
 * 95 % against both criteria when it may move either way) meets the criterion — a confidence
 * limit of the mean, not a prediction interval.
 *
 * Formula in words: put values and limits on the scale of the chosen order ('none', 'ln', '1/x').
 * With two or more batches decide the model by `poolability` (significance 0.25): 'pooled' fits
 * one line to all data; 'common-slope' fits separate intercepts with one slope and evaluates each
 * batch; 'separate' evaluates each batch on its own line (by default with its own residual
 * variance). Each line's crossing comes from `confidenceLimitCrossing` with the Student t quantile
 * at the confidence level (one-sided) or (1 + confidence)/2 (two-sided) and the fit's residual
 * degrees of freedom; the overall shelf life is the minimum over lines (worst batch). A crossing
 * beyond the horizon is reported as "no crossing within N", never as a huge number. The result
 * flags a shelf life beyond the longest observed time. It is the statistical estimate only: the
 * proposal under the Q1E extrapolation limit is `conditionShelfLives`' step.
 *
 * Reference: ICH Q1E (2003) App. B.1–B.2; ICH Q1A(R2) 2.2.9 as
 * quoted in ASEAN 2013 §4.10; docs/methods.md#q1e-shelf-life.
 *
 * Throws `KineticsError`: 'invalid-input' (bad confidence, significance, horizon, or grid
 * count; missing acceptance limit), plus the errors of `transformedStabilityBatches`,
 * `poolability` and `linearLeastSquares`.
 *
 * Example: one batch at 100.1, 99.5, 99.0, 98.6, 98.1 % at 0, 3, 6, 9, 12 months, decreasing,
 * lower limit 95 % on the 'none' scale: the lower 95 % one-sided limit meets 95 at 28.73
 * months (scipy brentq on the same formula agrees) — beyond the 12 months observed, so `beyondObservedData` is true.
 */
export function q1eShelfLife(batches: readonly StabilityBatch[], options: Q1eShelfLifeOptions): Q1eShelfLife {
  const confidence = options.confidence ?? 0.95;
  const significance = options.significance ?? Q1E_POOLABILITY_SIGNIFICANCE;
  const separateBatchVariance = options.separateBatchVariance ?? 'individual';
  const gridPoints = options.gridPoints ?? DEFAULT_GRID_POINTS;
  for (const [name, value] of [
    ['confidence', confidence],
    ['significance', significance],
  ] as const) {
    if (!(value > 0 && value < 1)) {
      throw new KineticsError('invalid-input', `${name} must lie strictly between 0 and 1; got ${value}.`);
    }
  }
  if (!(Number.isInteger(gridPoints) && gridPoints >= 2)) {
    throw new KineticsError('invalid-input', `gridPoints must be an integer ≥ 2; got ${gridPoints}.`);
  }
  const transformed = transformedStabilityBatches(batches, options.transform);
  const acceptance = q1eAcceptanceLimits(
    options.direction,
    options.transform,
    confidence,
    options.lowerLimit,
    options.upperLimit,
  );
  const longestObservedTime = Math.max(...transformed.flatMap((batch) => batch.times));
  const horizon = options.horizon ?? DEFAULT_HORIZON_MULTIPLE * longestObservedTime;
  if (!(Number.isFinite(horizon) && horizon > 0)) {
    throw new KineticsError('invalid-input', `The horizon must be finite and positive; got ${horizon}.`);
  }

  const poolabilityResult =
    transformed.length >= 2 ? poolabilityOfTransformed(transformed, options.transform, significance) : null;
  const model = poolabilityResult?.decision ?? 'single-batch';
  const lines = fittedLines(transformed, model, separateBatchVariance);
  const evaluated = lines.map((line) =>
    lineShelfLife(line, acceptance.limits, acceptance.quantileLevel, horizon),
  );
  const reached = evaluated
    .filter((line) => line.shelfLife !== null)
    .sort((a, b) => (a.shelfLife ?? 0) - (b.shelfLife ?? 0));
  const limiting = reached[0];
  const shelfLife = limiting?.shelfLife ?? null;
  const gridEnd = Math.min(horizon, Math.max(longestObservedTime, shelfLife ?? 0));
  const withGrids = evaluated.map((line, i) =>
    withGrid(line, lines[i]!, options.transform, gridEnd, gridPoints),
  );

  return {
    method: {
      transform: options.transform,
      direction: options.direction,
      confidence,
      sidedness: acceptance.sidedness,
      quantileLevel: acceptance.quantileLevel,
      significance,
      separateBatchVariance,
      notes: acceptance.notes,
    },
    model,
    poolability: poolabilityResult,
    poolabilityNotApplicableReason:
      poolabilityResult === null
        ? 'A single batch: there is nothing to pool; its own line is evaluated.'
        : null,
    lines: withGrids,
    shelfLife,
    status: limiting?.status ?? 'no-crossing-within-horizon',
    limitingLine: limiting?.label ?? null,
    reason:
      limiting === undefined
        ? `No crossing within ${Number(horizon.toPrecision(4))} time units: no confidence limit meets an acceptance limit in the searched range.`
        : `${limiting.reason.replace(/\.$/, '')} (line ${limiting.label}${evaluated.length > 1 ? ', the earliest of all lines' : ''}).`,
    horizon,
    extrapolation: {
      longestObservedTime,
      beyondObservedData: shelfLife === null ? null : shelfLife > longestObservedTime,
    },
  };
}
