import { FORMATION_ORDER_WHY, isFormationRate } from '../../../../shared/figures/arrhenius-rate-words.ts';
import type { StoredAnalysisResult } from '../../../../shared/figures/stored-result.ts';
import { inTimeUnit } from '../../../../shared/figures/time-unit-words.ts';
import type { DatasetAnalysis } from '../../../../shared/kinetics/analyse-dataset.ts';
import type { Q1eProposal } from '../../../../shared/kinetics/stability/q1e-proposal.ts';
import { significant } from './template-format.ts';

/**
 * The summaries of one attribute's analysis that a report context lists: per series (order,
 * k, derived times), per storage condition (the ICH Q1E estimate and the proposal) and the
 * Arrhenius fit. Used for the study's first attribute (`summary` of the context) and for every
 * attribute of a multi-attribute run alike (`attributes[]`, `report-attributes.ts`).
 *
 * Throws nothing.
 */

export const ORDER_WORDS = ['zero order', 'first order', 'second order'] as const;

/** The DatasetAnalysis of a stored result (of its first attribute); throws on a corrupt record. */
export function analysisOf(result: DatasetAnalysis | StoredAnalysisResult): DatasetAnalysis {
  const analysis = 'analysis' in result ? result.analysis : result;
  if (!analysis || !Array.isArray(analysis.series))
    throw new Error('The analysis run holds no analysis result.');
  return analysis;
}

/** An acceptance criterion in words: "not less than 95 % label claim", "0.5 to 2 %". */
export function criterionText(limits: {
  lowerLimit: number | null;
  upperLimit: number | null;
  unit: string;
}): string {
  const { lowerLimit: low, upperLimit: high, unit } = limits;
  if (low !== null && high !== null) return `${low} to ${high} ${unit}`;
  if (low !== null) return `not less than ${low} ${unit}`;
  if (high !== null) return `not more than ${high} ${unit}`;
  return 'none stated';
}
export function seriesSummaries(analysis: DatasetAnalysis) {
  return analysis.series.map((result) => {
    const fitted = result.analysis;
    const reported = fitted?.reportedOrder ?? null;
    const model =
      reported === null ? null : (fitted?.models.find((candidate) => candidate.order === reported) ?? null);
    const figure = (
      value: { estimate: number | null; ci95: [number, number] | null; unit: string } | null | undefined,
    ) => (value ? { estimate: value.estimate, interval: value.ci95, unit: value.unit } : null);
    return {
      id: result.id,
      batch: result.batch,
      temperatureC: result.temperatureC,
      analysed: fitted !== null,
      notAnalysedReason: result.error?.message ?? null,
      points: fitted?.n ?? 0,
      verdict: fitted?.verdict ?? `Not analysed: ${result.error?.message ?? 'no result'}`,
      reportedOrder: reported === null ? null : ORDER_WORDS[reported],
      orderSource: fitted?.orderSource ?? null,
      errorModel: fitted?.errorModel ?? null,
      fractionReacted: fitted?.fractionReacted ?? null,
      k: model ? { estimate: model.k, interval: model.kCi95, unit: model.kUnit } : null,
      halfLife: figure(fitted?.halfLife),
      t90: figure(fitted?.t90),
      timeToLowerLimit: figure(fitted?.timeToLimit?.lower),
      timeToUpperLimit: figure(fitted?.timeToLimit?.upper),
      timeUnit: fitted?.timeUnit ?? null,
      valueUnit: fitted?.valueUnit ?? null,
      warnings: (fitted?.warnings ?? []).map((warning) => warning.message),
    };
  });
}

export function shelfLifeSummaries(analysis: DatasetAnalysis, storageTemperatureC: number | null) {
  return (analysis.shelfLife ?? []).map((condition) => {
    const timeUnit =
      analysis.series.find((result) => condition.seriesIds.includes(result.id))?.analysis?.timeUnit ?? '';
    const result = condition.result;
    const isStorage = condition.temperatureC === null || condition.temperatureC === storageTemperatureC;
    const where =
      condition.temperatureC === null
        ? 'all series'
        : `${condition.temperatureC} °C${isStorage ? ' (storage condition)' : ' (not the storage condition; for information)'}`;
    const extrapolated = result?.extrapolation.beyondObservedData
      ? ', beyond the observed data (extrapolated)'
      : '';
    const estimateStatement = !result
      ? `Shelf life at ${where} not evaluated: ${condition.notApplicableReason ?? 'no result'}.`
      : result.shelfLife === null
        ? `At ${where} no crossing of the acceptance criterion within ${significant(result.horizon, 3, timeUnit)}: ${inTimeUnit(result.reason, timeUnit)}.`
        : `ICH Q1E statistical shelf-life estimate at ${where}: ${significant(result.shelfLife, 3, timeUnit)}${result.limitingLine ? `, limited by ${result.limitingLine}` : ''}${extrapolated} (model: ${result.model}).`;
    // Runs recorded before proposals carry none (stored results are never rewritten).
    const proposal = (condition as { proposal?: Q1eProposal }).proposal ?? null;
    const isLongTerm = proposal !== null && condition.role === 'long-term';
    const proposed = proposal?.proposedShelfLifeMonths ?? null;
    const statement = isLongTerm
      ? `Proposed shelf life at ${condition.temperatureC === null ? 'all series' : `${condition.temperatureC} °C`} (long-term): ${proposed === null ? 'none' : `${proposed} month${proposed === 1 ? '' : 's'}`}. ${proposal.statement}`
      : estimateStatement;
    return {
      temperatureC: condition.temperatureC,
      role: proposal === null ? null : condition.role,
      isLongTermCondition: isLongTerm,
      proposedShelfLife: proposal?.proposedShelfLife ?? null,
      proposedShelfLifeMonths: proposed,
      proposedReason: proposal?.proposedReason ?? null,
      estimateExceedsLimit: proposal?.estimateExceedsLimit ?? null,
      extrapolationLimit: proposal?.extrapolationLimit ?? null,
      estimateStatement,
      isStorageCondition: isStorage,
      seriesIds: condition.seriesIds,
      transformReason: condition.transformReason,
      shelfLife: result?.shelfLife ?? null,
      timeUnit,
      status: result?.status ?? null,
      model: result?.model ?? null,
      limitingLine: result?.limitingLine ?? null,
      reason: inTimeUnit(result?.reason ?? condition.notApplicableReason ?? '', timeUnit),
      beyondObservedData: result?.extrapolation.beyondObservedData ?? null,
      statement,
    };
  });
}

export function arrheniusSummary(analysis: DatasetAnalysis) {
  const arrhenius = analysis.arrhenius;
  if (!arrhenius) return null;
  const fit = arrhenius.fit;
  const prediction = arrhenius.prediction;
  const kilo = (value: number) => value / 1000;
  return {
    order: arrhenius.order === null ? null : ORDER_WORDS[arrhenius.order],
    orderWhy:
      arrhenius.orderSource === 'analyst'
        ? 'the order fixed by the analyst'
        : arrhenius.orderSource === 'study'
          ? 'the study’s working order, as no series named an order'
          : arrhenius.orderSource === 'formation'
            ? FORMATION_ORDER_WHY
            : 'the order with the lowest summed AICc over the series',
    noOrderNamedWarning:
      analysis.warnings.find((warning) => warning.code === 'no-order-named')?.message ?? null,
    eyring: arrhenius.eyring?.fit
      ? {
          deltaHKJPerMol: kilo(arrhenius.eyring.fit.enthalpyOfActivation.estimate),
          deltaHInterval: arrhenius.eyring.fit.enthalpyOfActivation.interval?.map(kilo) ?? null,
          deltaSJPerMolK: arrhenius.eyring.fit.entropyOfActivation.estimate,
          deltaSInterval: arrhenius.eyring.fit.entropyOfActivation.interval ?? null,
        }
      : null,
    q10: arrhenius.q10
      ? {
          fromC: arrhenius.q10.fromC,
          toC: arrhenius.q10.toC,
          estimate: arrhenius.q10.estimate,
          interval: arrhenius.q10.interval,
        }
      : null,
    temperatures: arrhenius.rateConstants.map((point) => point.temperatureC),
    activationEnergyKJPerMol: fit ? kilo(fit.activationEnergy) : null,
    activationEnergyInterval: fit?.activationEnergyInterval ? fit.activationEnergyInterval.map(kilo) : null,
    intervalUnavailableReason: fit?.intervalUnavailableReason ?? null,
    rSquared: fit?.rSquared ?? null,
    notApplicableReason: arrhenius.notApplicableReason,
    prediction: prediction
      ? {
          temperatureC: prediction.temperatureC,
          k: prediction.rateConstant,
          kInterval: prediction.confidenceInterval,
          kUnit: arrhenius.kUnit,
          t90: prediction.t90?.estimate ?? null,
          timeUnit: analysis.series.find((result) => result.analysis)?.analysis?.timeUnit ?? '',
          t90Interval: prediction.t90?.ci ?? null,
          extrapolated: prediction.extrapolation !== null,
        }
      : null,
  };
}

/**
 * The Arrhenius summary of one attribute (`attributes[].arrhenius`): as `arrheniusSummary`, with
 * `rateSense` — 'formation' when the line is of the zero-order formation rate k_f = dC/dt of an
 * attribute that increases (engine 0.4.0), else 'loss' (every run stored before 0.4.0). Kept off
 * `summary.arrhenius`, whose fields an organisation's template has used since before attributes.
 */
export function attributeArrheniusSummary(analysis: DatasetAnalysis) {
  const summary = arrheniusSummary(analysis);
  if (!summary) return null;
  return {
    ...summary,
    rateSense: isFormationRate(analysis.arrhenius) ? ('formation' as const) : ('loss' as const),
  };
}
