import { attributePrefix } from '../../../shared/figures/attribute-figures.ts';
import { formatInterval, formatSignificant } from '../../../shared/figures/significant-figures.ts';
import type { StoredAnalysisResult } from '../../../shared/figures/stored-result.ts';
import type { StudyAttribute } from '../../../shared/kinetics/stability/study-attributes.ts';
import type { MassBalance } from '../../../shared/kinetics/stability/study-shelf-life-types.ts';
import type { IntegerOrder, Series } from '../../../shared/kinetics/types.ts';
import { attributeResults, type PageFigure } from './analysis-attribute-results.ts';
import { groupedWarnings, readableNumbers, verdictSummary } from './analysis-verdict.ts';

/**
 * What the analysis page adds for a run of several attributes (issue 15 §1): the study's proposed
 * shelf life with its limiting attribute(s) and a row per attribute (ICH Q1E Appendix A: each
 * attribute evaluated separately, the shortest governs), each further attribute's own results
 * (the same model as the first attribute's, `attributeResults`), and the mass balance. Every
 * number and sentence comes from the stored result; nothing is computed anew. A run of one
 * attribute has none of this (`multiAttributeModel` returns null) and its page is unchanged.
 */

/** "not less than 95 and not more than 105 %", or "none stated". */
export function criterionWords(
  attribute: Pick<StudyAttribute, 'lowerLimit' | 'upperLimit' | 'unit'>,
): string {
  const limits = [
    attribute.lowerLimit === null ? null : `not less than ${attribute.lowerLimit}`,
    attribute.upperLimit === null ? null : `not more than ${attribute.upperLimit}`,
  ].filter(Boolean);
  return limits.length ? `${limits.join(' and ')} ${attribute.unit}` : 'none stated';
}

/** A time as the protocol writes it: 24, 17.5 (at most 4 significant figures, no trailing zeros). */
const plain = (value: number) => String(Number(value.toPrecision(4)));

function months(value: number | null, timeUnit: string, inMonths: number | null): string {
  if (value === null) return 'none';
  const own = `${plain(value)} ${timeUnit}${value === 1 ? '' : 's'}`;
  if (inMonths === null || /^months?$/i.test(timeUnit)) return own;
  return `${plain(inMonths)} months (${own})`;
}

/** A list of names in words: "A", "A and B", "A, B and C". */
function names(list: readonly string[]): string {
  return list.length <= 1 ? (list[0] ?? '') : `${list.slice(0, -1).join(', ')} and ${list.at(-1)}`;
}

/** The study's verdict: the proposal, the limiting attribute(s), and the table "Shelf life by attribute". */
export function studyVerdictModel(result: StoredAnalysisResult) {
  const study = result.studyShelfLife;
  if (!study) return null;
  const proposed = months(study.proposedShelfLife, study.timeUnit, study.proposedShelfLifeMonths);
  const limiting = study.limitingAttributes;
  return {
    headline:
      study.proposedShelfLife === null
        ? `No shelf life is proposed for the study${study.reason ? `: ${readableNumbers(study.reason)}` : '.'}`
        : `Proposed shelf life of the study: ${proposed}, limited by ${names(limiting)}${limiting.length > 1 ? ' (a tie)' : ''}.`,
    limiting: names(limiting),
    statement: readableNumbers(study.statement),
    rows: study.attributes.map((entry) => ({
      attribute: entry.attribute.name,
      unit: entry.attribute.unit,
      criterion: criterionWords(entry.attribute),
      proposed: months(entry.proposedShelfLife, entry.timeUnit, entry.proposedShelfLifeMonths),
      proposedValue: entry.proposedShelfLife === null ? '' : String(entry.proposedShelfLife),
      why: readableNumbers(entry.reason ?? entry.statement),
      limiting: entry.limiting,
    })),
  };
}

/** The mass-balance table of each batch and condition, with its trend in words. */
export function massBalanceModel(balance: MassBalance | undefined) {
  if (!balance) return null;
  const number = (value: number) => formatSignificant(value, 4);
  return {
    statement: readableNumbers(balance.statement),
    assay: balance.assayAttribute,
    degradants: names(balance.degradantAttributes),
    unit: balance.unit,
    timeUnit: balance.timeUnit,
    series: balance.series.map((entry, index) => {
      const label = [
        entry.batch === null ? null : `batch ${entry.batch}`,
        entry.temperatureC === null ? null : `${entry.temperatureC} °C`,
      ]
        .filter(Boolean)
        .join(' at ');
      const trend = entry.trend;
      return {
        id: `mass-balance-${index}`,
        label: label ? label.charAt(0).toUpperCase() + label.slice(1) : `Series ${index + 1}`,
        rows: entry.points.map((point) => ({
          time: plain(point.time),
          assay: number(point.assay),
          degradants: number(point.degradants),
          total: number(point.total),
          percent: formatSignificant(point.percentOfInitial, 4),
        })),
        trend: trend
          ? `Trend of the total: ${formatSignificant(trend.slope, 3)} % of initial per ${balance.timeUnit} (${Math.round(trend.confidenceLevel * 100)} % CI ${formatInterval([trend.lower, trend.upper], 3)}).`
          : 'Trend of the total: not estimated (fewer than 3 pulls with every attribute measured).',
      };
    }),
  };
}

interface OtherAttributesInput {
  result: StoredAnalysisResult;
  series: readonly Series[];
  figureIds: ReadonlySet<string>;
  figure: (id: string) => PageFigure | null;
  storageTemperatureC: number | null;
  fixedOrder: IntegerOrder | undefined;
}

/** Each attribute after the first: its heading, criterion, verdict lines and results. */
export function otherAttributesModel(input: OtherAttributesInput) {
  return (input.result.otherAttributes ?? []).map((entry, index) => {
    const prefix = attributePrefix(index + 1);
    const results = attributeResults({
      analysis: entry.analysis,
      series: input.series,
      figureIds: input.figureIds,
      figure: input.figure,
      storageTemperatureC: input.storageTemperatureC,
      prefix,
    });
    const { attribute } = entry;
    return {
      anchor: `${prefix}results`,
      name: attribute.name,
      heading: `${attribute.name} (${attribute.unit})`,
      criterion: criterionWords(attribute),
      direction: attribute.direction,
      censoredRule:
        attribute.censoredRule === 'exclude'
          ? 'results reported below a limit are excluded from the fit'
          : `results reported below a limit are fitted at ${attribute.censoredValue} ${attribute.unit}`,
      summary: verdictSummary(entry.analysis, results.shelfLife, results.arrhenius, input.fixedOrder),
      warningGroups: groupedWarnings(entry.analysis),
      series: results.series,
      shelfLife: results.shelfLife,
      arrhenius: results.arrhenius,
      hasLowerLimit: attribute.lowerLimit !== null && attribute.direction !== 'increasing',
      hasUpperLimit: attribute.upperLimit !== null && attribute.direction !== 'decreasing',
      noOrderNamed: entry.analysis.series.every(
        (result) => !result.analysis || result.analysis.reportedOrder === null,
      ),
    };
  });
}
