import { rateWords } from '../../../shared/figures/arrhenius-rate-words.ts';
import type { DatasetAnalysis, DatasetOptions } from '../../../shared/kinetics/analyse-dataset.ts';

/**
 * The key results of an analysis run as short labelled texts, so that a reviewer can read two
 * versions of a report side by side (issue 13 §4: "what changed since the previous version").
 * Pure: it reads the run's stored result and options (`analysis_runs.result`, `.options`) and
 * formats each figure the same way, so two equal numbers give two equal texts and any difference
 * shows. Numbers keep 4 significant digits (what the report prints is not changed by this).
 *
 * Example: a first-order series "VZ-001" with k = 0.002113 1/month gives the row
 * `{ key: 'series:VZ-001:k', label: 'VZ-001: rate constant k', value: '0.002113 1/month' }`.
 */

export interface KeyResult {
  /** Stable across versions, so that rows of two runs can be paired. */
  key: string;
  label: string;
  value: string;
}

/**
 * The parts of a stored run this reads; anything missing shows as "—". `result` may be the JSON
 * part of a compact-form run (server/features/analysis/compact-result.ts) as stored: that form
 * moves only lists of 32 or more numbers into doubles, and every value read here is a scalar or
 * text, so it reads the same either way (tests/integration/analysis-result-compact.test.ts).
 */
export interface StoredRun {
  result: unknown;
  options: unknown;
  methodStatement: string;
}

const NONE = '—';
const ORDER_WORDS: Record<string, string> = { '0': 'zero order', '1': 'first order', '2': 'second order' };

function numberText(value: number | null | undefined, unit = ''): string {
  if (value === null || value === undefined || !Number.isFinite(value)) return NONE;
  const text = String(Number(value.toPrecision(4)));
  return unit ? `${text} ${unit}` : text;
}

function intervalText(interval: readonly [number, number] | null | undefined): string {
  if (!interval) return '';
  return ` (${numberText(interval[0])} to ${numberText(interval[1])})`;
}

function figureText(figure: { estimate: number | null; ci95: [number, number] | null; unit: string } | null) {
  if (!figure) return NONE;
  return `${numberText(figure.estimate, figure.unit)}${figure.estimate === null ? '' : intervalText(figure.ci95)}`;
}

function analysisOf(run: StoredRun): DatasetAnalysis | null {
  const result = run.result as { analysis?: DatasetAnalysis } | null;
  return result?.analysis ?? null;
}

function optionRows(run: StoredRun): KeyResult[] {
  const engine = ((run.options as { engine?: DatasetOptions } | null)?.engine ?? {}) as DatasetOptions;
  return [
    { key: 'option:lower', label: 'Lower acceptance limit', value: numberText(engine.lowerLimit) },
    { key: 'option:upper', label: 'Upper acceptance limit', value: numberText(engine.upperLimit) },
    {
      key: 'option:confidence',
      label: 'Confidence level',
      value: engine.confidenceLevel === undefined ? '0.95 (default)' : numberText(engine.confidenceLevel),
    },
    {
      key: 'option:order',
      label: 'Order fixed by the analyst',
      value:
        engine.order === undefined
          ? 'none (chosen from the data)'
          : (ORDER_WORDS[String(engine.order)] ?? NONE),
    },
  ];
}

function seriesRows(analysis: DatasetAnalysis): KeyResult[] {
  return analysis.series.flatMap((series) => {
    const key = `series:${series.id}`;
    const found = series.analysis;
    if (!found)
      return [
        { key: `${key}:error`, label: `${series.id}: not analysed`, value: series.error?.message ?? NONE },
      ];
    const reported = found.models.find((model) => model.order === found.reportedOrder) ?? null;
    return [
      {
        key: `${key}:order`,
        label: `${series.id}: reported order`,
        value:
          found.reportedOrder === null ? 'none named' : (ORDER_WORDS[String(found.reportedOrder)] ?? NONE),
      },
      {
        key: `${key}:k`,
        label: `${series.id}: rate constant k`,
        value: reported ? `${numberText(reported.k, reported.kUnit)}${intervalText(reported.kCi95)}` : NONE,
      },
      { key: `${key}:t90`, label: `${series.id}: t90`, value: figureText(found.t90) },
      { key: `${key}:half-life`, label: `${series.id}: half-life`, value: figureText(found.halfLife) },
      {
        key: `${key}:excluded`,
        label: `${series.id}: points excluded`,
        value: String(found.excluded.length),
      },
    ];
  });
}

function shelfLifeRows(analysis: DatasetAnalysis): KeyResult[] {
  return (analysis.shelfLife ?? []).map((condition) => {
    const where = condition.temperatureC === null ? 'all series' : `${condition.temperatureC} °C`;
    const months = condition.proposal.proposedShelfLifeMonths;
    return {
      key: `shelf-life:${where}`,
      label: `Proposed shelf life, ${where} (${condition.role})`,
      value:
        months === null
          ? (condition.proposal.proposedReason ?? condition.notApplicableReason ?? NONE)
          : `${months} months (statistical estimate ${numberText(condition.result?.shelfLife)})`,
    };
  });
}

function arrheniusRows(analysis: DatasetAnalysis): KeyResult[] {
  const arrhenius = analysis.arrhenius;
  if (!arrhenius?.fit) return [];
  const fit = arrhenius.fit;
  const prediction = arrhenius.prediction;
  return [
    {
      key: 'arrhenius:ea',
      label: 'Activation energy Ea',
      value: `${numberText(fit.activationEnergy / 1000, 'kJ/mol')}${
        fit.activationEnergyInterval
          ? intervalText([fit.activationEnergyInterval[0] / 1000, fit.activationEnergyInterval[1] / 1000])
          : ''
      }`,
    },
    ...(prediction
      ? [
          {
            key: 'arrhenius:k-storage',
            label: `${rateWords(arrhenius).label} at ${prediction.temperatureC} °C (Arrhenius)`,
            value: `${numberText(prediction.rateConstant, arrhenius.kUnit ?? '')}${intervalText(prediction.confidenceInterval)}`,
          },
        ]
      : []),
  ];
}

/** The key results of one run, in reading order: options, each series, Arrhenius, shelf lives, warnings. */
export function keyResults(run: StoredRun): KeyResult[] {
  const analysis = analysisOf(run);
  const rows = optionRows(run);
  if (!analysis) return [...rows, { key: 'result', label: 'Result', value: 'not readable' }];
  const warnings =
    analysis.warnings.length +
    analysis.series.reduce((sum, series) => sum + (series.analysis?.warnings.length ?? 0), 0);
  return [
    ...rows,
    ...seriesRows(analysis),
    ...arrheniusRows(analysis),
    ...shelfLifeRows(analysis),
    { key: 'warnings', label: 'Warnings from the engine', value: String(warnings) },
    { key: 'engine', label: 'Engine version', value: analysis.engineVersion },
  ];
}

export interface ComparedResult {
  label: string;
  previous: string;
  current: string;
  changed: boolean;
}

/**
 * The key results of two runs paired by key, the current run's order first and rows only the
 * previous run had after them; `changed` marks a difference in the text shown.
 */
export function compareKeyResults(
  previous: readonly KeyResult[],
  current: readonly KeyResult[],
): ComparedResult[] {
  const before = new Map(previous.map((row) => [row.key, row]));
  const now = new Set(current.map((row) => row.key));
  const paired = current.map((row) => {
    const old = before.get(row.key)?.value ?? NONE;
    return { label: row.label, previous: old, current: row.value, changed: old !== row.value };
  });
  const gone = previous
    .filter((row) => !now.has(row.key))
    .map((row) => ({ label: row.label, previous: row.value, current: NONE, changed: true }));
  return [...paired, ...gone];
}
