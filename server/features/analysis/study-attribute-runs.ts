import type { AnalysisOptions } from '../../../shared/api/analyses.ts';
import {
  type AttributeAnalysisResult,
  analyseForStorage,
  type StoredAnalysisResult,
} from '../../../shared/figures/stored-result.ts';
import { analyseDataset, type DatasetOptions } from '../../../shared/kinetics/analyse-dataset.ts';
import { applyCensoredRule, censoredRuleSentence } from '../../../shared/kinetics/censored-values.ts';
import { KineticsError } from '../../../shared/kinetics/numeric/kinetics-error.ts';
import { massBalance } from '../../../shared/kinetics/stability/mass-balance.ts';
import {
  type StudyAttribute,
  sameAttributeName,
  seriesOfAttribute,
  studyAttributes,
} from '../../../shared/kinetics/stability/study-attributes.ts';
import {
  type AttributeOutcome,
  studyShelfLife,
} from '../../../shared/kinetics/stability/study-shelf-life.ts';
import type { Series } from '../../../shared/kinetics/types.ts';
import type { studies } from '../../platform/db/schema/index.ts';
import { HttpError } from '../../platform/http/http-error.ts';

/**
 * One analysis run over every attribute of a study (issue 15 §1; ICH Q1E Appendix A: each
 * attribute is evaluated separately, the shortest shelf life governs).
 *
 * Rules, decided here and printed in the method statement:
 * - A study of one attribute is analysed exactly as before attributes were listed: the same series,
 *   options, result and statement; its stored result has none of the multi-attribute keys. Its
 *   censored results ("<LOQ") follow the study's rule like any attribute's, and only then does the
 *   statement gain the rule's sentence.
 * - Several attributes: each gets its own series (`seriesOfAttribute`), its own limits, direction
 *   and working order, the study's Q1E declaration and storage temperature, its censored rule,
 *   then `analyseForStorage` (the analysis and its bands from one fit). The first fills `analysis`, the others
 *   `otherAttributes` — every attribute after the first, in study order, always, so
 *   `otherAttributes[i]` is attribute i + 2 of the study.
 * - An attribute with no series in the dataset is analysed as no series (an empty analysis) and
 *   recorded as "No data in this dataset", so the study proposes no shelf life.
 * - An attribute the engine refuses (a KineticsError: e.g. a stated-value rule with no value) is
 *   recorded with the engine's reason, stored as an empty analysis, and the run still stores; the
 *   study then proposes none. The first attribute is the exception: the run is refused (400) as it
 *   always was, since the stored result is built around its analysis.
 * - Series that name an attribute the study does not list are not analysed; the statement says so.
 */

type Study = typeof studies.$inferSelect;

/** The engine options of one attribute: the analyst's choices, the study's declaration, the attribute's criterion. */
export function engineOptions(
  options: AnalysisOptions,
  study: Study,
  attribute: StudyAttribute = studyAttributes(study)[0]!,
): DatasetOptions {
  return {
    confidenceLevel: options.confidenceLevel,
    errorModel: options.errorModel,
    ...(options.order === undefined ? {} : { order: options.order }),
    ...(attribute.lowerLimit === null ? {} : { lowerLimit: attribute.lowerLimit }),
    ...(attribute.upperLimit === null ? {} : { upperLimit: attribute.upperLimit }),
    ...(study.storageTemperatureC === null ? {} : { storageTemperatureC: study.storageTemperatureC }),
    // The protocol's working order, used only where the data name none (issue 12 §3).
    ...(attribute.workingOrder === null || attribute.workingOrder === undefined
      ? {}
      : {
          workingOrder: {
            order: attribute.workingOrder,
            reason: attribute.workingOrderReason || 'stated by the study',
          },
        }),
    direction: attribute.direction,
    // The study's Q1E declaration; the long-term condition is its storage temperature.
    q1e: {
      storage: study.storageCategory,
      longTermTemperatureC: study.storageTemperatureC,
      intermediateTemperatureC: study.intermediateTemperatureC,
      acceleratedTemperatureC: study.acceleratedTemperatureC,
      acceleratedChange: study.acceleratedChange,
      intermediateChange: study.intermediateChange,
      littleChange: study.littleChange,
      supportingData: study.supportingData,
    },
  };
}

export interface StudyEvaluation {
  result: StoredAnalysisResult;
  methodStatement: string;
  /** The first attribute's engine options (as every run stored them), then each other attribute's. */
  engine: DatasetOptions;
  otherEngines: { attribute: string; engine: DatasetOptions }[];
}

interface Evaluated {
  attribute: StudyAttribute;
  engine: DatasetOptions;
  series: Series[];
  result: AttributeAnalysisResult;
  notAnalysedReason: string | null;
}

const NO_DATA = 'No data in this dataset.';

/** The attribute a series measures: the named one, else the study's first; null when the study lists none such. */
function attributeOf(series: Series, attributes: readonly StudyAttribute[]): StudyAttribute | null {
  if (series.attribute === undefined) return attributes[0] ?? null;
  return attributes.find((attribute) => sameAttributeName(attribute.name, series.attribute!)) ?? null;
}

function evaluateAttribute(
  series: readonly Series[],
  attributes: readonly StudyAttribute[],
  attribute: StudyAttribute,
  engine: DatasetOptions,
  first: boolean,
): Evaluated {
  const own = seriesOfAttribute(series, attributes, attribute);
  try {
    const ruled = applyCensoredRule(own, attribute);
    // One fit per series: the bands come from it (issue 16), not from a second analysis.
    const { analysis, confidenceBands } = analyseForStorage(ruled, engine);
    return {
      attribute,
      engine,
      series: ruled,
      result: { attribute, analysis, confidenceBands },
      notAnalysedReason: own.length === 0 && attributes.length > 1 ? NO_DATA : null,
    };
  } catch (error) {
    if (!(error instanceof KineticsError)) throw error;
    if (first) throw new HttpError(400, error.message, [{ field: 'options', message: error.message }]);
    // Not analysed: stored as an analysis of no series, with the engine's reason beside it.
    const analysis = analyseDataset([], engine);
    return {
      attribute,
      engine,
      series: [],
      result: { attribute, analysis, confidenceBands: [] },
      notAnalysedReason: `Not analysed: ${error.message}`,
    };
  }
}

function limitsText(attribute: StudyAttribute): string {
  const limits = [
    attribute.lowerLimit === null ? null : `lower limit ${attribute.lowerLimit}`,
    attribute.upperLimit === null ? null : `upper limit ${attribute.upperLimit}`,
  ].filter((text) => text !== null);
  return `${attribute.unit}; ${limits.join(', ') || 'no limit'}; ${attribute.direction}`;
}

/** Runs the engine over every attribute of the study; `series` carry the analyst's exclusions. */
export function evaluateStudy(
  series: readonly Series[],
  study: Study,
  options: AnalysisOptions,
): StudyEvaluation {
  const attributes = studyAttributes(study);
  const evaluated = attributes.map((attribute, index) =>
    evaluateAttribute(series, attributes, attribute, engineOptions(options, study, attribute), index === 0),
  );
  const [first, ...others] = evaluated as [Evaluated, ...Evaluated[]];
  const unlisted = series.filter((entry) => attributeOf(entry, attributes) === null);
  const unlistedText =
    unlisted.length === 0
      ? null
      : `Not analysed: ${unlisted.map((entry) => `${entry.id} (measures "${entry.attribute}", which the study does not list)`).join('; ')}.`;
  const censoredSentences = evaluated.flatMap(
    (entry) => censoredRuleSentence(entry.series, entry.attribute) ?? [],
  );
  if (attributes.length === 1) {
    const result: StoredAnalysisResult = {
      analysis: first.result.analysis,
      confidenceBands: first.result.confidenceBands,
    };
    const extra = [...censoredSentences, ...(unlistedText === null ? [] : [unlistedText])];
    return {
      result,
      methodStatement: [result.analysis.methodStatement.text, ...extra].join('\n\n'),
      engine: first.engine,
      otherEngines: [],
    };
  }
  const outcomes: AttributeOutcome[] = evaluated.map((entry) => ({
    attribute: entry.attribute,
    analysis: entry.notAnalysedReason === null ? entry.result.analysis : null,
    timeUnit: entry.series[0]?.timeUnit ?? '',
    notAnalysedReason: entry.notAnalysedReason,
  }));
  const verdict = studyShelfLife(outcomes);
  const balance = massBalance(series, attributes, first.result.analysis.confidenceLevel);
  const result: StoredAnalysisResult = {
    analysis: first.result.analysis,
    confidenceBands: first.result.confidenceBands,
    otherAttributes: others.map((entry) => entry.result),
    studyShelfLife: verdict,
    ...(balance === null ? {} : { massBalance: balance }),
  };
  const sections = evaluated.flatMap((entry, index) => [
    `Attribute ${index + 1} of ${evaluated.length}: ${entry.attribute.name} (${limitsText(entry.attribute)}).`,
    entry.notAnalysedReason === null
      ? entry.result.analysis.methodStatement.text
      : entry.notAnalysedReason === NO_DATA
        ? 'No series of this attribute is in this dataset; it was not analysed.'
        : `${entry.notAnalysedReason} The run was stored without this attribute's analysis.`,
  ]);
  return {
    result,
    methodStatement: [
      ...sections,
      `Study shelf life. ${verdict.statement}`,
      ...(balance === null ? [] : [balance.statement]),
      ...censoredSentences,
      ...(unlistedText === null ? [] : [unlistedText]),
    ].join('\n\n'),
    engine: first.engine,
    otherEngines: others.map((entry) => ({ attribute: entry.attribute.name, engine: entry.engine })),
  };
}

/**
 * The dataset's series as the engine saw them in a run: the analyst's exclusions (already marked)
 * and each attribute's censored rule. Never throws: a rule the run could not apply leaves the
 * series as stored (such a run refused or recorded that attribute as not analysed).
 */
export function seriesAsRun(series: readonly Series[], attributes: readonly StudyAttribute[]): Series[] {
  return series.map((entry) => {
    const attribute = attributeOf(entry, attributes);
    if (attribute === null) return entry;
    try {
      return applyCensoredRule([entry], attribute)[0]!;
    } catch {
      return entry;
    }
  });
}
