import type { DatasetFindings, DatasetOptions } from './dataset-analysis.ts';
import { OUTLIER_FAMILY_ALPHA } from './order/bonferroni-outlier-test.ts';
import { PROPORTIONAL_LOG_LIKELIHOOD_GAIN } from './order/choose-error-model.ts';
import {
  DECISIVE_ORDER_EVIDENCE,
  MAX_WRONG_ORDER_RATE_PER_CELL,
  MIN_FRACTION_REACTED,
  MIN_POINTS_FOR_COMPARISON,
  ORDER_CONSISTENCY_ALPHA,
  SYSTEMATIC_MISFIT_ALPHA,
} from './order/order-decision-thresholds.ts';
import { Q1E_POOLABILITY_SIGNIFICANCE } from './stability/poolability.ts';
import { q1eProposalText } from './stability/q1e-proposal-text.ts';
import { MOLAR_GAS_CONSTANT } from './temperature/physical-constants.ts';
import type { Series } from './types.ts';
import { DAYS_PER_MONTH, DAYS_PER_YEAR } from './units.ts';

/**
 * The method statement of an analysis: exactly what was done, in a structured record and in plain
 * prose that a report prints as is and an auditor can follow step by step.
 *
 * Why: ICH Q1E 2.2 asks that "the procedure used and the assumptions underlying the model should be
 * stated and justified", and EU GMP Annex 11 / 21 CFR 11.10(e) expect every exclusion and choice to
 * stay visible (Annex 11 §9, audit trails; docs/methods.md#method-statement). So the statement
 * lists the data used and excluded (with reasons and cell references), transformations, models,
 * error model, the order-selection rule with its thresholds (read from the engine's own
 * constants, so the text cannot drift from the code), the confidence level, the temperature and
 * shelf-life steps, and the engine version.
 *
 * Throws nothing.
 *
 * Example: for one series of 7 points with nothing excluded, `data.pointsUsed` is 7,
 * `data.excludedPoints` is empty, and the text begins "Data. 1 series, 7 points used; none excluded."
 */

export interface MethodStatement {
  engineVersion: string;
  confidenceLevel: number;
  data: {
    series: {
      id: string;
      batch: string | null;
      temperatureC: number | null;
      timeUnit: string;
      valueUnit: string;
      pointsUsed: number;
      notAnalysedReason: string | null;
    }[];
    pointsUsed: number;
    excludedPoints: { seriesId: string; time: number; value: number; reason: string; cell: string | null }[];
  };
  conventions: string[];
  transformations: string[];
  models: string[];
  errorModel: {
    requested: string;
    rule: string;
    perSeries: { id: string; errorModel: string; reason: string }[];
  };
  orderSelection: {
    source: 'analyst' | 'data';
    rule: string;
    thresholds: {
      minFractionReacted: number;
      decisiveOrderEvidence: number;
      orderConsistencyAlpha: number;
      systematicMisfitAlpha: number;
      minPointsForComparison: number;
      /** Family-wise level of the Bonferroni outlier test per series (critical value per series in the diagnostics). */
      outlierFamilyAlpha: number;
    };
  };
  intervals: string;
  temperature: string | null;
  shelfLife: string | null;
  /** The proposed shelf life under the ICH Q1E extrapolation limit: declaration, rule, branch, assumptions. */
  shelfLifeProposal: string | null;
  references: string[];
  text: string;
}

const ORDER_WORDS = ['zero', 'first', 'second'];
const percent = (fraction: number) => `${Number((fraction * 100).toPrecision(4))} %`;
const fmt = (value: number) => String(Number(value.toPrecision(6)));

export function methodStatement(
  analysis: DatasetFindings,
  seriesList: readonly Series[],
  options: DatasetOptions,
): MethodStatement {
  const confidence = percent(analysis.confidenceLevel);
  const seriesEntries = analysis.series.map((result, index) => ({
    id: result.id,
    batch: result.batch,
    temperatureC: result.temperatureC,
    timeUnit: seriesList[index]?.timeUnit ?? '',
    valueUnit: seriesList[index]?.valueUnit ?? '',
    pointsUsed: result.analysis?.n ?? 0,
    notAnalysedReason: result.error?.message ?? null,
  }));
  const excludedPoints = analysis.series.flatMap((result) =>
    (result.analysis?.excluded ?? []).map((point) => ({
      seriesId: result.id,
      time: point.time,
      value: point.value,
      reason: point.reason,
      cell: point.source?.cell ?? null,
    })),
  );
  const pointsUsed = seriesEntries.reduce((sum, entry) => sum + entry.pointsUsed, 0);

  const conventions = [
    'Rate law convention −dC/dt = k·Cⁿ; k is positive for a falling value, in units valueUnit^(1−n)/timeUnit.',
    `Time units convert with fixed factors: 1 year = ${DAYS_PER_YEAR} d, 1 month = ${DAYS_PER_MONTH} d; sampling dates become elapsed calendar months from each series' first sample.`,
    'Temperatures in kelvin are T = θ/°C + 273.15.',
  ];
  const transformations = [
    'Values were fitted on their original scale (constant error) or on the natural-log scale (proportional error); no other transformation enters the rate-law fits.',
    'The straight-line plots of value, ln(value) and 1/value against time are reported for reference only; they do not decide the order.',
  ];
  const models = [
    'Integrated rate laws of zero, first and second order, and of a free order n, fitted to each series by nonlinear least squares (Levenberg–Marquardt).',
    'Half-life, t90 and time to each limit come from the reported order’s fit.',
  ];
  const requested = options.errorModel ?? 'auto';
  const errorRule =
    requested === 'auto'
      ? `Chosen per series from the data: proportional error (log scale) only when its log-likelihood on the original scale beats constant error by at least ${PROPORTIONAL_LOG_LIKELIHOOD_GAIN}; otherwise constant error (unweighted).`
      : `Set by the analyst to ${requested} error for every series.`;
  const perSeries = analysis.series.flatMap((result) =>
    result.analysis
      ? [
          {
            id: result.id,
            errorModel: result.analysis.errorModel,
            reason: result.analysis.errorModelChoice.reason,
          },
        ]
      : [],
  );
  const used = perSeries.map((entry) => `${entry.id}: ${entry.errorModel}`).join('; ');
  const errorText = used === '' ? errorRule : `${errorRule} Used: ${used}.`;
  const thresholds = {
    minFractionReacted: MIN_FRACTION_REACTED,
    decisiveOrderEvidence: DECISIVE_ORDER_EVIDENCE,
    orderConsistencyAlpha: ORDER_CONSISTENCY_ALPHA,
    systematicMisfitAlpha: SYSTEMATIC_MISFIT_ALPHA,
    minPointsForComparison: MIN_POINTS_FOR_COMPARISON,
    outlierFamilyAlpha: OUTLIER_FAMILY_ALPHA,
  };
  const orderSource = options.order === undefined ? 'data' : 'analyst';
  const dataRule =
    `An integer order is named only when all three integer laws were compared (at least ${MIN_POINTS_FOR_COMPARISON} points), ` +
    `at least ${percent(MIN_FRACTION_REACTED)} of the initial value has reacted, its lead over the next-best integer order, as (N − 2)·ln(RSS ratio) = ΔAICc·(N − 2)/N, is at least ${DECISIVE_ORDER_EVIDENCE} (a ΔAICc of ${((DECISIVE_ORDER_EVIDENCE * 9) / 7).toFixed(1)} with 9 points), ` +
    `the F test against the free-order fit does not reject it at ${ORDER_CONSISTENCY_ALPHA}, and the runs test on its residuals does not reject at ${SYSTEMATIC_MISFIT_ALPHA}; otherwise the order is reported as not identified. ` +
    `These thresholds were calibrated by simulation (orders 0, 1, 2; 5 to 15 points; 0.5 to 3 % noise; 10 to 90 % reacted) so that a wrong order is named in at most ${percent(MAX_WRONG_ORDER_RATE_PER_CELL)} of series in every combination of fraction reacted and noise.`;
  const orderRule =
    orderSource === 'analyst'
      ? `Fixed by the analyst at ${ORDER_WORDS[options.order as number]} order; the data-based verdict is still reported beside it. ${dataRule}`
      : dataRule;
  const intervals =
    `Two-sided ${confidence} intervals: k and C0 as estimate ± t·SE on the fit's residual degrees of freedom; times to a level by Fieller's method (delta method on ln t for the free order). ` +
    `Points whose externally studentised residual exceeds in absolute value the Bonferroni-corrected two-sided t quantile t(1 − ${OUTLIER_FAMILY_ALPHA}/(2N); N − p − 1), for N points and p fitted parameters, are flagged as possible outliers (family-wise level ${percent(OUTLIER_FAMILY_ALPHA)} per series); none is removed by the program.`;

  let temperature: string | null = null;
  const arrhenius = analysis.arrhenius;
  if (arrhenius) {
    const formation = arrhenius.rateSense === 'formation';
    const declaredOrder = options.workingOrder?.order ?? 0;
    const workingOrderLeftOut =
      arrhenius.orderSource === 'formation' && declaredOrder !== 0
        ? `, so the study's working order (${ORDER_WORDS[declaredOrder]}) does not enter`
        : '';
    const orderText = formation
      ? `Fitted to the formation rate (the attribute increases): dC/dt = −k of each series' zero-order law, in ${arrhenius.kUnit ?? 'the value unit per time unit'}; first- and second-order laws describe a loss and give no formation rate${workingOrderLeftOut}.`
      : arrhenius.order === null
        ? 'No common order could be determined.'
        : arrhenius.orderSource === 'analyst'
          ? `Rate constants of the analyst's ${ORDER_WORDS[arrhenius.order]} order were used.`
          : `Rate constants of ${ORDER_WORDS[arrhenius.order]} order were used, the integer order with the lowest AICc summed over the series (AICc totals ${arrhenius.aiccTotals.map((total) => (total === null ? 'n/a' : fmt(total))).join(', ')} for orders 0, 1, 2).`;
    const excluded = arrhenius.excludedSeries.map((entry) => `${entry.id} (${entry.reason})`).join('; ');
    temperature = [
      orderText,
      formation
        ? 'Batches at one temperature were pooled into one point: the mean of the logarithm of the formation rate weighted by (rate/se(rate))² (plain mean when a standard error was missing).'
        : 'Batches at one temperature were pooled into one point: the mean of ln k weighted by (k/se(k))² (plain mean when a standard error was missing).',
      `${formation ? 'The logarithm of the formation rate' : 'ln k'} was regressed on 1/T (${options.arrheniusWeighting ?? 'unweighted'}), Ea = −R·slope with R = ${MOLAR_GAS_CONSTANT} J/(mol·K).`,
      excluded
        ? `Left out of the Arrhenius fit: ${excluded}.`
        : 'No series was left out of the Arrhenius fit.',
      options.storageTemperatureC === undefined
        ? ''
        : `${formation ? 'The formation rate' : 'k'} at ${options.storageTemperatureC} °C was predicted from the line, with a confidence interval for the mean line back-transformed from the ln scale.`,
      arrhenius.notApplicableReason ? `Not completed: ${arrhenius.notApplicableReason}.` : '',
    ]
      .filter((sentence) => sentence !== '')
      .join(' ');
  }

  let shelfLife: string | null = null;
  if (analysis.shelfLife) {
    const limits = [
      options.lowerLimit === undefined ? null : `lower limit ${options.lowerLimit}`,
      options.upperLimit === undefined ? null : `upper limit ${options.upperLimit}`,
    ].filter((text) => text !== null);
    const conditions = analysis.shelfLife.map((condition) => {
      const where = condition.temperatureC === null ? 'All series' : `At ${condition.temperatureC} °C`;
      const scale = { none: 'the values', ln: 'ln(value)', '1/x': '1/value' }[condition.transform];
      const model = condition.result
        ? `; model ${condition.result.model}, ${condition.result.method.sidedness}`
        : '';
      const outcome = condition.notApplicableReason
        ? `; not evaluated: ${condition.notApplicableReason}`
        : '';
      const role =
        condition.role === undefined || condition.role === 'not-declared' ? '' : ` (${condition.role})`;
      return `${where}${role}: ${condition.seriesIds.join(', ')} regressed on ${scale} (${condition.transformReason})${model}${outcome}.`;
    });
    shelfLife =
      `ICH Q1E shelf life against ${limits.join(' and ')}: the earliest time at which the ${confidence} confidence limit of the mean regression line meets the limit ` +
      `(one-sided for a one-sided limit, two-sided for both): the statistical estimate; batch poolability by ANCOVA at significance ${Q1E_POOLABILITY_SIGNIFICANCE} (slopes first, then intercepts); the minimum over batches when they are not pooled. ` +
      conditions.join(' ');
  }

  const shelfLifeProposal =
    analysis.shelfLife && analysis.q1eDeclaration
      ? q1eProposalText(analysis.q1eDeclaration, analysis.shelfLife)
      : null;

  const references = [
    'ICH Q1E Evaluation of Stability Data (2003), App. B',
    ...(shelfLifeProposal === null
      ? []
      : ['ICH Q1E Evaluation of Stability Data (2003), §2.3–2.5 and Appendix A (extrapolation)']),
    'ICH Q1A(R2) Stability Testing of New Drug Substances and Products (2003), 2.2.9',
    ...(shelfLifeProposal === null ? [] : ['ICH Q1A(R2) (2003), 2.1.7.1 and 2.2.7.1 (significant change)']),
    'K. P. Burnham & D. R. Anderson, Model Selection and Multimodel Inference, 2nd ed. (2002)',
    'D. W. Marquardt, J. Soc. Ind. Appl. Math. 11 (1963) 431–441',
    'IUPAC Gold Book, "Arrhenius equation", doi 10.1351/goldbook.A00446',
  ];

  const notAnalysed = seriesEntries.filter((entry) => entry.notAnalysedReason !== null);
  const dataText =
    `Data. ${seriesEntries.length} series, ${pointsUsed} points used; ` +
    (excludedPoints.length === 0
      ? 'none excluded.'
      : `${excludedPoints.length} excluded: ${excludedPoints.map((point) => `${point.seriesId} at time ${point.time} (value ${point.value}${point.cell ? `, ${point.cell}` : ''}): ${point.reason.replace(/[.;\s]+$/, '')}`).join('; ')}.`) +
    (notAnalysed.length === 0
      ? ''
      : ` Not analysed: ${notAnalysed.map((entry) => `${entry.id} (${entry.notAnalysedReason})`).join('; ')}.`);
  const text = [
    dataText,
    `Conventions. ${conventions.join(' ')}`,
    `Transformations. ${transformations.join(' ')}`,
    `Models. ${models.join(' ')}`,
    `Error model. ${errorText}`,
    `Order. ${orderRule}`,
    `Intervals. ${intervals}`,
    temperature === null ? null : `Temperature dependence. ${temperature}`,
    shelfLife === null ? null : `Shelf life. ${shelfLife}`,
    shelfLifeProposal === null ? null : `Shelf-life proposal. ${shelfLifeProposal}`,
    `Engine. Rateledger kinetics engine ${analysis.engineVersion}.`,
  ]
    .filter((paragraph) => paragraph !== null)
    .join('\n\n');

  return {
    engineVersion: analysis.engineVersion,
    confidenceLevel: analysis.confidenceLevel,
    data: { series: seriesEntries, pointsUsed, excludedPoints },
    conventions,
    transformations,
    models,
    errorModel: { requested, rule: errorRule, perSeries },
    orderSelection: { source: orderSource, rule: orderRule, thresholds },
    intervals,
    temperature,
    shelfLife,
    shelfLifeProposal,
    references,
    text,
  };
}
