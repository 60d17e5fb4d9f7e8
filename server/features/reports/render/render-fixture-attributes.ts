import type { StoredAnalysisResult } from '../../../../shared/figures/stored-result.ts';
import { confidenceBands } from '../../../../shared/figures/stored-result.ts';
import { analyseDataset, type DatasetOptions } from '../../../../shared/kinetics/analyse-dataset.ts';
import { studentTQuantile } from '../../../../shared/kinetics/numeric/student-t-quantile.ts';
import type { StudyAttribute } from '../../../../shared/kinetics/stability/study-attributes.ts';
import type {
  AttributeShelfLife,
  MassBalance,
  MassBalanceSeries,
  StudyShelfLife,
} from '../../../../shared/kinetics/stability/study-shelf-life-types.ts';
import type { Series } from '../../../../shared/kinetics/types.ts';
import { FIXTURE_LIMIT, FIXTURE_OPTIONS, fixtureSeries, reportFixture } from './render-fixture.ts';
import { buildReportContext, type ReportContextInput } from './report-context.ts';
import { reportRunFigures } from './report-figures.ts';

/**
 * The invented study of `render-fixture.ts` measured as a real stability study is: three
 * attributes of the same batches at every pull — Assay (the fixture's series, ≥ 95 % label
 * claim), Impurity B (rising by zero order, ≤ 0.5 % label claim, "< 0.05" at the first pull of
 * each series: censored, excluded from the fit by the study's rule) and Water (≤ 3.0 % w/w).
 * Each attribute is analysed alone with the real engine and its own criterion (ICH Q1E
 * Appendix A); the study's shelf life (the shortest proposal) and the mass balance (assay plus
 * Impurity B) are built here as a run stores them, from those analyses, by the contract's rules.
 * Impurity B limits the shelf life.
 *
 * Nothing here is real data.
 *
 * Example: multiAttributeReportFixture().context.studyShelfLife.limitingText is "Impurity B".
 */

const SCATTER = [0.004, -0.003, 0.002, -0.005, 0.003, -0.001, 0.004, -0.002];
const LOQ = 0.05;

export const IMPURITY: StudyAttribute = {
  name: 'Impurity B',
  unit: '% label claim',
  direction: 'increasing',
  lowerLimit: null,
  upperLimit: 0.5,
  workingOrder: 0,
  workingOrderReason: 'Degradation products form at a constant rate early in a study.',
  censoredRule: 'exclude',
  censoredValue: null,
  massBalanceRole: 'degradant',
};

export const WATER: StudyAttribute = {
  name: 'Water',
  unit: '% w/w',
  direction: 'increasing',
  lowerLimit: null,
  upperLimit: 3,
  workingOrder: 0,
  workingOrderReason: '',
  censoredRule: 'exclude',
  censoredValue: null,
  massBalanceRole: null,
};

/** A series of `attribute` growing linearly from `start` at `rate` per month, like the assay's batches. */
function linearSeries(
  attribute: StudyAttribute,
  assay: Series,
  start: number,
  rate: number,
  scatter: number,
): Series {
  return {
    id: `${attribute.name} · ${assay.id}`,
    attribute: attribute.name,
    ...(assay.batch ? { batch: assay.batch } : {}),
    ...(assay.temperatureC === undefined ? {} : { temperatureC: assay.temperatureC }),
    timeUnit: assay.timeUnit,
    valueUnit: attribute.unit,
    observations: assay.observations.map((observation, index) => {
      const value = Number(
        (start + rate * observation.time + scatter * (SCATTER[index % SCATTER.length] as number)).toFixed(3),
      );
      const cell = observation.source?.cell?.replace(/!C/, attribute === IMPURITY ? '!D' : '!E');
      const below = attribute === IMPURITY && value < LOQ;
      return {
        time: observation.time,
        value: below ? LOQ : value,
        ...(cell ? { source: { cell } } : {}),
        ...(below ? { censored: { text: '< 0.05', limit: LOQ } } : {}),
      };
    }),
  };
}

/** The dataset's series: each attribute's, ids prefixed with the attribute (several attributes). */
export function multiAttributeSeries(): Series[] {
  const assay = fixtureSeries().map((series) => ({
    ...series,
    id: `Assay · ${series.id}`,
    attribute: 'Assay',
  }));
  const hot = (series: Series) => series.temperatureC === 40;
  const impurity = assay.map((series) =>
    linearSeries(
      IMPURITY,
      fixtureSeries().find((own) => `Assay · ${own.id}` === series.id)!,
      0.01,
      hot(series) ? 0.07 : 0.017,
      1,
    ),
  );
  const water = assay.map((series) =>
    linearSeries(
      WATER,
      fixtureSeries().find((own) => `Assay · ${own.id}` === series.id)!,
      1.2,
      hot(series) ? 0.11 : 0.02,
      5,
    ),
  );
  return [...assay, ...impurity, ...water];
}

/** The censored rule 'exclude' applied as the run applies it, before the engine sees the series. */
function censoredExcluded(series: Series[]): Series[] {
  return series.map((entry) => ({
    ...entry,
    observations: entry.observations.map((observation) =>
      observation.censored && !observation.excluded
        ? {
            ...observation,
            excluded: {
              reason: `reported below the limit (${observation.censored.text}): excluded from the fit by the study's rule`,
            },
          }
        : observation,
    ),
  }));
}

function optionsOf(attribute: StudyAttribute): DatasetOptions {
  const { lowerLimit: _lower, order: _order, ...shared } = FIXTURE_OPTIONS;
  return {
    ...shared,
    direction: attribute.direction,
    ...(attribute.upperLimit === null ? {} : { upperLimit: attribute.upperLimit }),
    ...(attribute.workingOrder === null ? {} : { order: attribute.workingOrder }),
  };
}

function outcome(attribute: StudyAttribute, analysis: StoredAnalysisResult['analysis']): AttributeShelfLife {
  const condition = analysis.shelfLife?.find((entry) => entry.role === 'long-term' && entry.proposal);
  const proposal = condition?.proposal ?? null;
  return {
    attribute,
    proposedShelfLife: proposal?.proposedShelfLife ?? null,
    proposedShelfLifeMonths: proposal?.proposedShelfLifeMonths ?? null,
    timeUnit: 'month',
    reason: proposal?.proposedReason ?? (proposal ? null : 'no long-term proposal'),
    statement: proposal?.statement ?? 'No long-term proposal.',
    limiting: false,
  };
}

function studyShelfLifeOf(entries: AttributeShelfLife[]): StudyShelfLife {
  const proposed = entries.map((entry) => entry.proposedShelfLifeMonths ?? Number.POSITIVE_INFINITY);
  const minimum = Math.min(...proposed);
  const attributes = entries.map((entry, index) => ({ ...entry, limiting: proposed[index] === minimum }));
  const limiting = attributes.filter((entry) => entry.limiting).map((entry) => entry.attribute.name);
  return {
    attributes,
    limitingAttributes: limiting,
    proposedShelfLife: minimum,
    proposedShelfLifeMonths: minimum,
    timeUnit: 'month',
    reason: null,
    statement: `Proposed shelf life: ${minimum} months, limited by ${limiting.join(' and ')} (the shortest of the attributes' proposals, ICH Q1E Appendix A).`,
  };
}

/** Assay plus Impurity B per batch and condition, with a least-squares trend and its t interval. */
function massBalanceOf(series: Series[]): MassBalance {
  const assay = series.filter((entry) => entry.attribute === 'Assay');
  const rows: MassBalanceSeries[] = assay.map((own) => {
    const impurity = series.find((entry) => entry.id === own.id.replace('Assay', IMPURITY.name))!;
    const points = own.observations
      .filter((observation) => !observation.excluded)
      .map((observation) => {
        const degradant = impurity.observations.find((entry) => entry.time === observation.time)!;
        const degradants = degradant.censored ? 0 : degradant.value;
        return {
          time: observation.time,
          assay: observation.value,
          degradants,
          total: observation.value + degradants,
        };
      });
    const initial = points[0]!.total;
    const withPercent = points.map((point) => ({
      ...point,
      percentOfInitial: (100 * point.total) / initial,
    }));
    const n = withPercent.length;
    const meanT = withPercent.reduce((sum, point) => sum + point.time, 0) / n;
    const meanY = withPercent.reduce((sum, point) => sum + point.percentOfInitial, 0) / n;
    const sxx = withPercent.reduce((sum, point) => sum + (point.time - meanT) ** 2, 0);
    const slope =
      withPercent.reduce((sum, point) => sum + (point.time - meanT) * (point.percentOfInitial - meanY), 0) /
      sxx;
    const residual = withPercent.reduce(
      (sum, point) => sum + (point.percentOfInitial - meanY - slope * (point.time - meanT)) ** 2,
      0,
    );
    const half = studentTQuantile(0.975, n - 2) * Math.sqrt(residual / (n - 2) / sxx);
    return {
      batch: own.batch ?? null,
      temperatureC: own.temperatureC ?? null,
      points: withPercent,
      trend: { slope, lower: slope - half, upper: slope + half, confidenceLevel: 0.95 },
    };
  });
  return {
    assayAttribute: 'Assay',
    degradantAttributes: [IMPURITY.name],
    unit: '% label claim',
    timeUnit: 'month',
    series: rows,
    statement:
      'Mass balance: Assay plus Impurity B falls to about 97 % of the initial total after 24 months at 25 °C: Impurity B accounts for part of the assay lost; results reported below the limit count as 0 (the study excludes them from the fit).',
  };
}

export function multiAttributeReportFixture() {
  const series = multiAttributeSeries();
  const base = reportFixture();
  const assaySeries = censoredExcluded(series.filter((entry) => entry.attribute === 'Assay'));
  const assay = analyseDataset(assaySeries, FIXTURE_OPTIONS);
  const others = [IMPURITY, WATER].map((attribute) => {
    const own = censoredExcluded(series.filter((entry) => entry.attribute === attribute.name));
    const options = optionsOf(attribute);
    const analysis = analyseDataset(own, options);
    return { attribute, analysis, confidenceBands: confidenceBands(analysis, own, options) };
  });
  const assayAttribute: StudyAttribute = {
    ...IMPURITY,
    name: 'Assay',
    direction: 'decreasing',
    lowerLimit: FIXTURE_LIMIT,
    upperLimit: null,
    workingOrder: 1,
    massBalanceRole: 'assay',
  };
  const stored: StoredAnalysisResult = {
    analysis: assay,
    confidenceBands: confidenceBands(assay, assaySeries, FIXTURE_OPTIONS),
    otherAttributes: others,
    studyShelfLife: studyShelfLifeOf([
      outcome(assayAttribute, assay),
      ...others.map((other) => outcome(other.attribute, other.analysis)),
    ]),
    massBalance: massBalanceOf(series),
  };
  const figures = reportRunFigures(stored, series, {
    name: 'Assay',
    lowerLimit: FIXTURE_LIMIT,
    upperLimit: null,
  });
  const input: ReportContextInput = {
    ...base.input,
    study: { ...base.input.study, title: 'VZ-STAB-07 assay, impurity B and water' },
    // The series as the engine saw them (the run reads them so: exclusions and censored rules applied).
    analysisRun: { ...base.input.analysisRun, result: stored, series: censoredExcluded(series) },
    figures,
  };
  return { series, stored, figures, input, context: buildReportContext(input) };
}
