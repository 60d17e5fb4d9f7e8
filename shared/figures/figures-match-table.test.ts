import { describe, expect, it } from 'vitest';
import { analyseDataset, type DatasetOptions } from '../kinetics/analyse-dataset.ts';
import type { ModelSummary } from '../kinetics/derived/model-summary.ts';
import type { Series } from '../kinetics/types.ts';
import { analysisFigures, type FigureSpec } from './analysis-figures.ts';
import {
  lawLabels,
  namedLaw,
  PLAUSIBLE_DELTA_AICC,
  PLAUSIBLE_WEIGHT,
  plausibleLaws,
} from './law-standing.ts';
import { MODEL_NAMES, resultRows } from './results-table.ts';
import { formatSignificant } from './significant-figures.ts';
import { confidenceBands, type StoredAnalysisResult } from './stored-result.ts';

// Issue 12 §4: a figure labels a law "chosen" only when the results table names it; otherwise it
// shows the plausible laws with their own labels. Invented first-order data (C0 = 100) with a
// fixed, hand-written noise pattern: at 25 °C only ~9 % reacts in 24 months, too little for the
// engine to name an order; at 60 and 70 °C over 75 % reacts and first order is named.
const NOISE = [0.21, -0.34, 0.12, 0.3, -0.18, -0.05, 0.26, -0.22];
function series(id: string, batch: string, temperatureC: number, k: number, months: number[], shift: number) {
  return {
    id,
    batch,
    temperatureC,
    timeUnit: 'month',
    valueUnit: '% of label claim',
    observations: months.map((time, index) => ({
      time,
      value: 100 * Math.exp(-k * time) + NOISE[(index + shift) % NOISE.length]!,
      source: { row: index + 2, cell: `Sheet1!C${index + 2}` },
    })),
  } satisfies Series;
}
const LONG_TERM = [0, 3, 6, 9, 12, 18, 24];
const SERIES: Series[] = [
  series('A @ 25 °C', 'A', 25, 0.004, LONG_TERM, 0),
  series('B @ 25 °C', 'B', 25, 0.0042, LONG_TERM, 3),
  series('A @ 60 °C', 'A', 60, 0.25, [0, 0.5, 1, 2, 3, 4, 5, 6], 1),
  series('A @ 70 °C', 'A', 70, 0.6, [0, 0.25, 0.5, 1, 1.5, 2, 2.5, 3], 2),
];

function figuresOf(
  options: DatasetOptions,
  list: Series[] = SERIES,
): { stored: StoredAnalysisResult; figures: FigureSpec[] } {
  const analysis = analyseDataset(list, options);
  const stored = { analysis, confidenceBands: confidenceBands(analysis, list, options) };
  return { stored, figures: analysisFigures(stored, list, { lower: options.lowerLimit }, 25) };
}

type Datum = Record<string, unknown>;
function layers(spec: Record<string, unknown>): { mark: unknown; values: Datum[] }[] {
  const found: { mark: unknown; values: Datum[] }[] = [];
  const visit = (node: Record<string, unknown>) => {
    const values = (node.data as { values?: unknown } | undefined)?.values;
    if (Array.isArray(values)) found.push({ mark: node.mark, values: values as Datum[] });
    for (const key of ['layer', 'hconcat']) {
      for (const child of (node[key] as Record<string, unknown>[] | undefined) ?? []) visit(child);
    }
  };
  visit(spec);
  return found;
}
const lawsOf = (figure: FigureSpec) => [
  ...new Set(
    layers(figure.spec).flatMap((layer) =>
      layer.values.flatMap((datum) => (datum.law ? [String(datum.law)] : [])),
    ),
  ),
];
const shaded = (figure: FigureSpec) =>
  layers(figure.spec).some((layer) => (layer.mark as { type?: string } | undefined)?.type === 'area');
const subtitle = (figure: FigureSpec) =>
  ([] as string[]).concat((figure.spec.title as { subtitle: string | string[] }).subtitle).join(' ');

const DEFAULT_OPTIONS: DatasetOptions = { lowerLimit: 95, storageTemperatureC: 25, direction: 'decreasing' };

describe('figures claim no order the results table does not name', () => {
  const { stored, figures } = figuresOf(DEFAULT_OPTIONS);
  const rows = resultRows(stored.analysis);

  it('labels a law "(chosen)" exactly when the table reports that order for the series', () => {
    stored.analysis.series.forEach((result, index) => {
      const curves = figures.find((figure) => figure.id === `series-${index}-curves`)!;
      // The table's reported order: the model of the series' derived rows (null = "none named").
      const reported =
        rows.find((row) => row.section === 'derived' && row.seriesId === result.id)?.model ?? null;
      const chosen = lawsOf(curves).filter((label) => label.endsWith('(chosen)'));
      if (reported === null) {
        expect(chosen, result.id).toEqual([]);
        expect(subtitle(curves), result.id).toMatch(/^No order named/);
        expect(shaded(curves), `${result.id}: no band when no law is chosen`).toBe(false);
      } else {
        expect(chosen, result.id).toEqual(['first order (chosen)']);
        expect(shaded(curves), result.id).toBe(true);
      }
    });
    // The fixture covers both cases.
    expect(stored.analysis.series.map((result) => result.analysis?.reportedOrder ?? null)).toEqual([
      null,
      null,
      1,
      1,
    ]);
  });

  it('with no order named, marks the plausible laws with the Akaike weights the table prints', () => {
    const result = stored.analysis.series[0]!;
    const curves = figures.find((figure) => figure.id === 'series-0-curves')!;
    const tableWeight = (model: string) => {
      const row = rows.find(
        (candidate) =>
          candidate.seriesId === result.id && candidate.model === model && candidate.quantity === 'weight',
      )!;
      return formatSignificant(row.estimate, row.digits);
    };
    const labels = lawsOf(curves);
    for (const model of result.analysis!.models) {
      const name = String(model.order);
      const label = labels.find((text) =>
        text.startsWith({ 0: 'zero', 1: 'first', 2: 'second', n: 'free' }[name]!),
      );
      const plausible =
        (model.weight ?? 0) >= PLAUSIBLE_WEIGHT ||
        model.aicc! -
          Math.min(...result.analysis!.models.map((other) => other.aicc ?? Number.POSITIVE_INFINITY)) <=
          PLAUSIBLE_DELTA_AICC;
      expect(label, name).toContain(
        plausible ? `(plausible, weight ${tableWeight(name)})` : `(weight ${tableWeight(name)})`,
      );
    }
  });

  it('with no order named, the legend’s plausible laws are exactly the laws of the table’s plausible rows', () => {
    stored.analysis.series.forEach((result, index) => {
      if (result.analysis!.reportedOrder !== null) return;
      const curves = figures.find((figure) => figure.id === `series-${index}-curves`)!;
      const legend = lawsOf(curves)
        .filter((label) => label.includes('(plausible'))
        .map((label) => label.replace(/ \(plausible.*$/, ''))
        .sort();
      const table = [
        ...new Set(
          rows
            .filter(
              (row) => row.section === 'plausible' && row.seriesId === result.id && row.model !== 'average',
            )
            .map((row) => MODEL_NAMES[row.model!]),
        ),
      ].sort();
      expect(legend.length, result.id).toBeGreaterThan(0);
      expect(legend, result.id).toEqual(table);
    });
  });

  it('names the diagnosed law of the residual plot for what it is: lowest AICc, not chosen', () => {
    const residuals = figures.find((figure) => figure.id === 'series-0-residuals')!;
    expect(subtitle(residuals)).toMatch(/fit \(lowest AICc of the integer laws; no order named\)/);
    expect(subtitle(residuals)).not.toMatch(/chosen/);
    expect(subtitle(figures.find((figure) => figure.id === 'series-2-residuals')!)).toMatch(
      /^First order fit \(chosen\)/,
    );
  });

  it('does not shade a stored band of a law nobody named (runs keep the lowest-AICc band)', () => {
    expect(stored.confidenceBands.find((band) => band.seriesId === 'A @ 25 °C')?.chosenBecause).toBe(
      'lowest-aicc',
    );
    expect(shaded(figures.find((figure) => figure.id === 'series-0-curves')!)).toBe(false);
  });

  it('the Arrhenius plot says where its order comes from and how many series named it', () => {
    const arrhenius = figures.find((figure) => figure.id === 'arrhenius')!;
    expect(subtitle(arrhenius)).toMatch(
      /^First order rate constants \(lowest summed AICc; named by 2 of 4 series\)/,
    );
    // Only the series the fit used are drawn (here all four).
    const used = stored.analysis.arrhenius!.rateConstants.flatMap((point) => point.seriesIds).sort();
    const drawn = layers(arrhenius.spec)
      .flatMap((layer) => layer.values.flatMap((datum) => (datum.series ? [String(datum.series)] : [])))
      .sort();
    expect(drawn).toEqual(used);
  });

  it('the Q1E plot gives the regression scale as the table does and never calls the default a zero-order choice', () => {
    const q1e = figures.find((figure) => figure.id === 'q1e-25')!;
    expect(stored.analysis.shelfLife!.find((condition) => condition.temperatureC === 25)!.transform).toBe(
      'none',
    );
    expect(subtitle(q1e)).toMatch(/^Scale: values \(ICH Q1E default: no order named for every batch\)/);
    expect(subtitle(q1e)).not.toMatch(/zero order/);
  });
});

describe('an order fixed by the analyst', () => {
  const { figures } = figuresOf({ ...DEFAULT_OPTIONS, order: 1 });

  it('is labelled in the table\'s words, "fixed by the analyst", on every series, with its band', () => {
    for (const index of [0, 1, 2, 3]) {
      const curves = figures.find((figure) => figure.id === `series-${index}-curves`)!;
      expect(lawsOf(curves).filter((label) => label.includes('('))).toEqual([
        'first order (fixed by the analyst)',
      ]);
      expect(shaded(curves)).toBe(true);
    }
    expect(subtitle(figures.find((figure) => figure.id === 'arrhenius')!)).toMatch(
      /\(order fixed by the analyst\)/,
    );
    expect(subtitle(figures.find((figure) => figure.id === 'q1e-25')!)).toMatch(
      /^Scale: ln\(value\) \(first order, fixed by the analyst\)/,
    );
  });
});

describe('a working order declared by the study', () => {
  const options = {
    ...DEFAULT_OPTIONS,
    workingOrder: { order: 1 as const, reason: 'protocol STB-12 states first-order loss' },
  };
  const { stored, figures } = figuresOf(options);
  const rows = resultRows(stored.analysis);

  it('labels the series the data cannot tell "working order from the study", the named ones "chosen", as the table does', () => {
    stored.analysis.series.forEach((result, index) => {
      const curves = figures.find((figure) => figure.id === `series-${index}-curves`)!;
      const labelled = lawsOf(curves).filter((label) => label.includes('('));
      // The table reports the order in the derived rows for each series; its source is the series'.
      const reported = rows.find((row) => row.section === 'derived' && row.seriesId === result.id)?.model;
      expect(reported, result.id).toBe('1');
      if (result.analysis!.orderSource === 'study') {
        expect(labelled, result.id).toEqual(['first order (working order from the study)']);
        expect(
          lawsOf(curves).some((label) => label.endsWith('(chosen)')),
          result.id,
        ).toBe(false);
      } else {
        expect(result.analysis!.orderSource).toBe('data');
        expect(labelled, result.id).toEqual(['first order (chosen)']);
      }
    });
    expect(stored.analysis.series.map((result) => result.analysis!.orderSource)).toEqual([
      'study',
      'study',
      'data',
      'data',
    ]);
  });

  it('keeps the plausible laws of the series the data cannot tell in the table, beside the working order', () => {
    const plausibleRows = rows.filter((row) => row.section === 'plausible' && row.seriesId === 'A @ 25 °C');
    expect(plausibleRows.some((row) => row.model === 'average' && row.quantity === 't90')).toBe(true);
    expect(plausibleRows.some((row) => row.model === 'average' && row.quantity === 'k')).toBe(false);
  });
});

describe('the Q1E crossing rule', () => {
  it('is labelled a statistical estimate and says so when it lies beyond the data', () => {
    // Lower limit 88: the 25 °C lines reach it after about 30 months, beyond the last pull at 24.
    const { stored, figures } = figuresOf({ ...DEFAULT_OPTIONS, lowerLimit: 88 });
    const condition = stored.analysis.shelfLife!.find((entry) => entry.temperatureC === 25)!;
    expect(condition.result!.extrapolation.beyondObservedData).toBe(true);
    const q1e = figures.find((figure) => figure.id === 'q1e-25')!;
    const label = layers(q1e.spec)
      .flatMap((layer) => layer.values)
      .find((datum) => String(datum.label ?? '').startsWith('shelf life'))?.label;
    expect(label).toBe(
      `shelf life estimate ${formatSignificant(condition.result!.shelfLife, 3)} month (beyond the data)`,
    );
  });
});

describe('plausibleLaws (Akaike weight ≥ 0.1 or ΔAICc ≤ 2)', () => {
  const model = (order: ModelSummary['order'], aicc: number | null, weight: number | null) =>
    ({ order, aicc, weight, applicable: true, k: 1, c0: 100 }) as ModelSummary;

  it('keeps a law on either criterion, at the thresholds included', () => {
    // ΔAICc ≤ 2 is "substantial support" (Burnham & Anderson 2002 §2.6, from memory); the weight
    // threshold 0.1 is the one issue 12 states (common practice).
    const models = [model(0, 10, 0.5), model(1, 12, 0.09), model(2, 12.5, 0.1), model('n', 12.5, 0.05)];
    expect([...plausibleLaws(models)].sort()).toEqual(['0', '1', '2']);
  });

  it('ranks nothing when no law has an AICc, and then labels every fitted law alike by name', () => {
    const models = [model(0, null, null), model(1, null, null)];
    expect(plausibleLaws(models).size).toBe(0);
    const analysis = { reportedOrder: null, orderSource: 'data', models } as never;
    expect(namedLaw(analysis)).toBeNull();
    expect(lawLabels(analysis).map((entry) => [entry.label, entry.emphasis])).toEqual([
      ['zero order', 'plausible'],
      ['first order', 'plausible'],
    ]);
  });

  it('never calls anything but the data\'s own choice "chosen"', () => {
    const models = [model(0, 10, 0.5), model(1, 11, 0.5)];
    const label = (orderSource: string) =>
      lawLabels({ reportedOrder: 1, orderSource, models } as never).find((entry) => entry.model === '1')!
        .label;
    expect(label('data')).toBe('first order (chosen)');
    expect(label('analyst')).toBe('first order (fixed by the analyst)');
    expect(label('study')).toBe('first order (working order from the study)');
    expect(label('something new')).toBe('first order (named)');
  });
});
