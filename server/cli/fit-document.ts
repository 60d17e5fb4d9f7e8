/**
 * The JSON document the `fit` command prints with `--json`: a stable, documented shape
 * (docs/fit-cli.md) built from the engine's dataset analysis, so scripts that read it do not
 * break when the engine's internal records grow.
 *
 * Field names follow the brief of the command: per series `id`, `n`, `selectedOrder`, `verdict`,
 * `models` (order, k, kCi95, c0, aicc, weight), `linearized` (slope, intercept, r2, k), `halfLife`
 * and `t90` with intervals, `shelfLife` when a limit is given; at top level `arrhenius` (eaJPerMol,
 * eaCi95, lnA, `eyring` with ΔH‡ and ΔS‡, and `q10` implied by Ea) when a temperature column is given; per series
 * `plausible` (each plausible law's figures and the model averages) when no order is named.
 * Every number is finite or null.
 *
 * Throws nothing.
 *
 * Example: for one series the document has `series.length === 1` and `arrhenius === null`.
 */
import type {
  ConditionShelfLife,
  DatasetAnalysis,
  SeriesResult,
} from '../../shared/kinetics/analyse-dataset.ts';
import type { DerivedFigure } from '../../shared/kinetics/derived/model-summary.ts';

export interface FitDocumentContext {
  file: string;
  sheet: string;
  timeUnit: string;
  valueUnit: string;
  temperatureColumnGiven: boolean;
  intakeWarnings: string[];
}

function figure(value: DerivedFigure | null | undefined) {
  if (!value) return null;
  return {
    estimate: value.estimate,
    ci95: value.ci95,
    unit: value.unit,
    beyondObservedTime: value.beyondObservedTime,
    ...(value.reason === undefined ? {} : { reason: value.reason }),
  };
}

/**
 * Where each series stands in the Q1E result: its condition and, within it, its line, each the
 * first one naming the series (as a search in order would find). Built once per document, so the
 * lookup per series is constant and the document stays linear in the number of series.
 */
interface ShelfLifePlace {
  condition: ConditionShelfLife;
  line: NonNullable<ConditionShelfLife['result']>['lines'][number] | undefined;
}

function shelfLifePlaces(conditions: ConditionShelfLife[]): Map<string, ShelfLifePlace> {
  const places = new Map<string, ShelfLifePlace>();
  for (const condition of conditions) {
    const lines = new Map<string, ShelfLifePlace['line']>();
    for (const line of condition.result?.lines ?? []) {
      for (const batch of line.batches) if (!lines.has(batch)) lines.set(batch, line);
    }
    for (const id of condition.seriesIds) {
      if (!places.has(id)) places.set(id, { condition, line: lines.get(id) });
    }
  }
  return places;
}

function seriesShelfLife(result: SeriesResult, places: Map<string, ShelfLifePlace> | null) {
  if (places === null) return undefined;
  const place = places.get(result.id);
  const condition = place?.condition;
  if (!condition?.result) {
    return {
      estimate: null,
      status: null,
      model: null,
      line: null,
      reason: condition?.notApplicableReason ?? 'not evaluated',
    };
  }
  const line = place?.line;
  return {
    estimate: line?.shelfLife ?? null,
    status: line?.status ?? null,
    model: condition.result.model,
    line: line?.label ?? null,
    reason: line?.reason ?? condition.result.reason,
  };
}

function seriesEntry(result: SeriesResult, places: Map<string, ShelfLifePlace> | null) {
  const analysis = result.analysis;
  const base = { id: result.id, batch: result.batch, temperatureC: result.temperatureC };
  if (!analysis) {
    return {
      ...base,
      n: 0,
      selectedOrder: null,
      verdict: `not analysed: ${result.error?.message}`,
      error: result.error,
    };
  }
  const shelfLife = seriesShelfLife(result, places);
  return {
    ...base,
    n: analysis.n,
    excluded: analysis.excluded,
    timeSpan: analysis.timeSpan,
    selectedOrder: analysis.selectedOrder,
    orderSource: analysis.orderSource,
    verdict: analysis.verdict,
    errorModel: analysis.errorModel,
    fractionReacted: analysis.fractionReacted,
    models: analysis.models.map((model) => ({
      order: model.order,
      ...(model.order === 'n' ? { n: model.n ?? null, nCi95: model.nCi95 ?? null } : {}),
      k: model.k,
      kCi95: model.kCi95,
      kUnit: model.kUnit,
      c0: model.c0,
      c0Ci95: model.c0Ci95,
      aicc: model.aicc,
      weight: model.weight,
      residualStandardDeviation: model.residualStandardDeviation,
      applicable: model.applicable,
      ...(model.reason === undefined ? {} : { reason: model.reason }),
    })),
    linearized: analysis.linearized.map((plot) => ({
      order: plot.order,
      transform: plot.transform,
      slope: plot.slope,
      intercept: plot.intercept,
      r2: plot.rSquared,
      k: plot.k,
      applicable: plot.applicable,
      ...(plot.reason === undefined ? {} : { reason: plot.reason }),
    })),
    ...(analysis.workingOrderReason === undefined ? {} : { workingOrderReason: analysis.workingOrderReason }),
    halfLife: figure(analysis.halfLife),
    t90: figure(analysis.t90),
    ...(analysis.plausible === undefined ? {} : { plausible: analysis.plausible }),
    ...(analysis.derivedReason === undefined ? {} : { derivedReason: analysis.derivedReason }),
    ...(analysis.timeToLimit === undefined
      ? {}
      : {
          timeToLimit: {
            lower: figure(analysis.timeToLimit.lower),
            upper: figure(analysis.timeToLimit.upper),
          },
        }),
    ...(shelfLife === undefined ? {} : { shelfLife }),
    warnings: analysis.warnings,
    error: null,
  };
}

function arrheniusEntry(analysis: DatasetAnalysis, temperatureColumnGiven: boolean) {
  if (!temperatureColumnGiven) return null;
  const arrhenius = analysis.arrhenius;
  if (!arrhenius) {
    return {
      eaJPerMol: null,
      eaCi95: null,
      lnA: null,
      notApplicableReason: 'all series are at one temperature',
    };
  }
  const fit = arrhenius.fit;
  const prediction = arrhenius.prediction;
  return {
    order: arrhenius.order,
    orderSource: arrhenius.orderSource,
    kUnit: arrhenius.kUnit,
    points: arrhenius.rateConstants,
    excludedSeries: arrhenius.excludedSeries,
    eaJPerMol: fit?.activationEnergy ?? null,
    eaCi95: fit?.activationEnergyInterval ?? null,
    lnA: fit?.lnPreExponentialFactor ?? null,
    lnACi95: fit?.lnPreExponentialFactorInterval ?? null,
    r2: fit?.rSquared ?? null,
    n: fit?.n ?? arrhenius.rateConstants.length,
    intervalUnavailableReason: fit?.intervalUnavailableReason ?? null,
    eyring: eyringEntry(arrhenius.eyring),
    q10: arrhenius.q10
      ? {
          fromC: arrhenius.q10.fromC,
          toC: arrhenius.q10.toC,
          estimate: arrhenius.q10.estimate,
          ci95: arrhenius.q10.interval,
        }
      : null,
    prediction: prediction
      ? {
          temperatureC: prediction.temperatureC,
          k: prediction.rateConstant,
          kCi95: prediction.confidenceInterval,
          kPredictionInterval95: prediction.predictionInterval,
          extrapolation: prediction.extrapolation,
          t90: prediction.t90,
          halfLife: prediction.halfLife,
          derivedReason: prediction.derivedReason,
        }
      : null,
    notApplicableReason: arrhenius.notApplicableReason,
  };
}

/** ΔH‡ (J/mol), ΔS‡ (J/(mol·K)) and ΔG‡ at the centre temperature, with intervals (Eyring 1935). */
function eyringEntry(eyring: NonNullable<DatasetAnalysis['arrhenius']>['eyring']) {
  const fit = eyring?.fit ?? null;
  const estimate = (value: { estimate: number; interval: [number, number] | null } | undefined) =>
    value === undefined ? { estimate: null, ci: null } : { estimate: value.estimate, ci: value.interval };
  const enthalpy = estimate(fit?.enthalpyOfActivation);
  const entropy = estimate(fit?.entropyOfActivation);
  const gibbs = estimate(fit?.gibbsEnergyOfActivationAtReference);
  return {
    deltaHJPerMol: enthalpy.estimate,
    deltaHCi95: enthalpy.ci,
    deltaSJPerMolK: entropy.estimate,
    deltaSCi95: entropy.ci,
    deltaGJPerMol: gibbs.estimate,
    deltaGCi95: gibbs.ci,
    deltaGTemperatureK: fit?.gibbsEnergyOfActivationAtReference.temperatureK ?? null,
    transmissionCoefficient: fit?.transmissionCoefficient ?? null,
    secondsPerTimeUnit: fit?.secondsPerTimeUnit ?? null,
    r2: fit?.rSquared ?? null,
    intervalUnavailableReason: fit?.intervalUnavailableReason ?? null,
    notApplicableReason: eyring === null ? 'no Arrhenius fit' : eyring.notApplicableReason,
  };
}

/** The proposal of a condition, flat in the entry: the documented `fit --json` contract. */
function proposalFields(condition: ConditionShelfLife) {
  const { proposal } = condition;
  const limit = proposal.extrapolationLimit;
  return {
    proposedShelfLife: proposal.proposedShelfLife,
    proposedShelfLifeMonths: proposal.proposedShelfLifeMonths,
    proposedReason: proposal.proposedReason,
    proposalLimitedBy: proposal.limitedBy,
    estimateExceedsLimit: proposal.estimateExceedsLimit,
    proposalStatement: proposal.statement,
    extrapolationLimit: {
      value: limit.value,
      valueMonths: limit.valueMonths,
      longTermMonths: limit.longTermMonths,
      rule: limit.rule,
      branch: limit.branch,
      branchText: limit.branchText,
      section: limit.section,
      assumptions: limit.assumptions,
      findings: limit.findings,
      notes: limit.notes,
    },
  };
}

function shelfLifeEntries(conditions: ConditionShelfLife[] | null) {
  if (conditions === null) return null;
  return conditions.map((condition) => ({
    temperatureC: condition.temperatureC,
    role: condition.role,
    roleReason: condition.roleReason,
    seriesIds: condition.seriesIds,
    transform: condition.transform,
    transformReason: condition.transformReason,
    model: condition.result?.model ?? null,
    sidedness: condition.result?.method.sidedness ?? null,
    poolingPValues: condition.result?.poolability
      ? {
          slopes: condition.result.poolability.slopeTest.pValue,
          intercepts: condition.result.poolability.interceptTest?.pValue ?? null,
        }
      : null,
    shelfLife: condition.result?.shelfLife ?? null,
    status: condition.result?.status ?? null,
    limitingLine: condition.result?.limitingLine ?? null,
    beyondObservedData: condition.result?.extrapolation.beyondObservedData ?? null,
    reason: condition.result?.reason ?? null,
    lines: (condition.result?.lines ?? []).map((line) => ({
      label: line.label,
      batches: line.batches,
      shelfLife: line.shelfLife,
      status: line.status,
    })),
    notApplicableReason: condition.notApplicableReason,
    ...proposalFields(condition),
  }));
}

/** The series entries in data-set order, each built only when asked for. */
function* seriesEntries(analysis: DatasetAnalysis) {
  const places = analysis.shelfLife === null ? null : shelfLifePlaces(analysis.shelfLife);
  for (const result of analysis.series) yield seriesEntry(result, places);
}

function documentWith<Series>(analysis: DatasetAnalysis, context: FitDocumentContext, series: Series) {
  return {
    engineVersion: analysis.engineVersion,
    file: context.file,
    sheet: context.sheet,
    timeUnit: context.timeUnit,
    valueUnit: context.valueUnit,
    confidenceLevel: analysis.confidenceLevel,
    series,
    arrhenius: arrheniusEntry(analysis, context.temperatureColumnGiven),
    shelfLife: shelfLifeEntries(analysis.shelfLife),
    q1eDeclaration: analysis.q1eDeclaration,
    warnings: [...context.intakeWarnings, ...analysis.warnings.map((warning) => warning.message)],
    methodStatement: analysis.methodStatement,
  };
}

export function fitDocument(analysis: DatasetAnalysis, context: FitDocumentContext) {
  return documentWith(analysis, context, [...seriesEntries(analysis)]);
}

/**
 * The same document with its series still to come: `series` yields one entry at a time, so
 * `--json` prints a large data set without holding the whole document and its text at once
 * (`fit-json-output.ts`).
 */
export function fitDocumentStreamed(analysis: DatasetAnalysis, context: FitDocumentContext) {
  return documentWith(analysis, context, seriesEntries(analysis));
}

export type FitDocument = ReturnType<typeof fitDocument>;
