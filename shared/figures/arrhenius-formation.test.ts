import { describe, expect, it } from 'vitest';
import { analyseDataset } from '../kinetics/analyse-dataset.ts';
import { formationSeries, LOSS_CASES } from '../kinetics/dataset-arrhenius-fixture.ts';
import { arrheniusPlotSpec } from './arrhenius-plot.ts';
import { FORMATION_ORDER_WHY, rateWords, seriesRate } from './arrhenius-rate-words.ts';
import { figureDataTables } from './figure-data-tables.ts';
import { resultRows } from './results-table.ts';

/*
 * The words of an Arrhenius result fitted to the formation rate of an attribute that increases
 * (engine 0.4.0, `rateSense` 'formation'): the table rows and the Arrhenius figure say "formation
 * rate k_f" and "ln k_f" with its unit (value unit per time unit), and a falling attribute, or a
 * run stored before 0.4.0 without `rateSense`, reads as before. Data: the invented degradant of
 * `dataset-arrhenius-fixture.ts` (k_f(25 °C) = 0.05 % per month, Ea = 90 kJ/mol).
 */

const formation = analyseDataset(formationSeries(0.002), {
  direction: 'increasing',
  upperLimit: 1,
  storageTemperatureC: 25,
});
const loss = analyseDataset(LOSS_CASES[0]!.series, LOSS_CASES[0]!.options);

type Layer = { encoding: Record<string, { title?: string }> & { tooltip?: { title?: string }[] } };
type Spec = {
  description: string;
  title: { subtitle: string[] };
  layer: (Layer & { data: { values: { lnK: number; series?: string }[] } })[];
};

describe('words for the rate of an Arrhenius fit', () => {
  it('names k_f for a formation fit and k for a loss or a run stored without rateSense', () => {
    expect(rateWords({ rateSense: 'formation' })).toEqual({
      symbol: 'k_f',
      name: 'formation rate k_f',
      label: 'Formation rate k_f',
      ln: 'ln k_f',
    });
    expect(rateWords({ rateSense: 'loss' }).label).toBe('k');
    // A run stored before engine 0.4.0 carries no rateSense: it is a loss.
    expect(rateWords({} as { rateSense: 'loss' }).ln).toBe('ln k');
    expect(rateWords(null).symbol).toBe('k');
  });

  it('takes −k₀ as the formation rate, and gives none for a rate that is not positive', () => {
    expect(seriesRate({ rateSense: 'formation' }, -0.05)).toBe(0.05);
    expect(seriesRate({ rateSense: 'formation' }, 0.01)).toBeNull();
    expect(seriesRate({ rateSense: 'loss' }, 0.004)).toBe(0.004);
    expect(seriesRate({ rateSense: 'loss' }, -0.004)).toBeNull();
    expect(seriesRate({ rateSense: 'loss' }, null)).toBeNull();
  });
});

describe('the Arrhenius rows of a formation fit', () => {
  const rows = resultRows(formation).filter((row) => row.section === 'arrhenius');
  const byQuantity = (quantity: string) => rows.find((row) => row.quantity === quantity)!;

  it('label the rates "formation rate k_f" in the value unit per time unit', () => {
    expect(formation.arrhenius!.rateSense).toBe('formation');
    expect(byQuantity('k-at-25C').label).toBe('Formation rate k_f at 25 °C (2 series)');
    expect(byQuantity('k-at-25C').unit).toBe('%/month');
    expect(byQuantity('k-at-25C').note).toBe('batches pooled: inverse-variance weighted mean of ln k_f');
    expect(byQuantity('predicted-k').label).toBe('Formation rate k_f predicted at 25 °C');
    expect(byQuantity('predicted-k').unit).toBe('%/month');
    expect(byQuantity('predicted-k').estimate).toBeCloseTo(0.05, 3);
    expect(byQuantity('r-squared').label).toBe('R² of ln k_f against 1/T');
    expect(byQuantity('ln-a').unit).toBe('ln(%/month)');
    expect(rows.some((row) => /^k |ln k\b(?!_f)/.test(row.label))).toBe(false);
    // t90 and half-life do not apply to a formation rate: no such rows.
    expect(rows.some((row) => row.quantity.startsWith('predicted-t90'))).toBe(false);
  });

  it('keep the words of k for a falling attribute', () => {
    const lossRows = resultRows(loss).filter((row) => row.section === 'arrhenius');
    expect(loss.arrhenius!.rateSense).toBe('loss');
    expect(lossRows.find((row) => row.quantity === 'k-at-25C')!.label).toBe('k at 25 °C (2 series)');
    expect(lossRows.find((row) => row.quantity === 'predicted-k')!.label).toBe('k predicted at 25 °C');
    expect(lossRows.find((row) => row.quantity === 'r-squared')!.label).toBe('R² of ln k against 1/T');
    expect(lossRows.some((row) => row.label.includes('formation'))).toBe(false);
  });
});

describe('the Arrhenius figure of a formation fit', () => {
  const spec = arrheniusPlotSpec(formation) as unknown as Spec;

  it('plots ln k_f of every series, on an axis named with its unit', () => {
    expect(spec.layer[0]!.encoding.y!.title).toBe('ln(k_f / %/month)');
    const points = spec.layer[1]!.data.values;
    // Every one of the eight series: its formation rate −k₀ is positive (k₀ itself is negative).
    expect(points).toHaveLength(8);
    for (const point of points) {
      const result = formation.series.find((entry) => entry.id === point.series)!;
      const k0 = result.analysis!.models.find((model) => model.order === 0)!.k!;
      expect(point.lnK).toBe(Math.log(-k0));
    }
    const titles = spec.layer.flatMap((layer) => (layer.encoding.tooltip ?? []).map((entry) => entry.title));
    expect(titles).toEqual(
      expect.arrayContaining(['ln k_f', 'pooled ln k_f', 'k_f', 'CI lower (ln k_f)', 'CI upper (ln k_f)']),
    );
    expect(titles).not.toContain('ln k');
  });

  it('says in its description and subtitle what is fitted, and why zero order', () => {
    expect(spec.description).toBe(
      `Arrhenius plot: ln k_f, the zero-order formation rate of an attribute that increases (${FORMATION_ORDER_WHY}), against 1000/T with the fitted line and the predicted formation rate.`,
    );
    expect(spec.title.subtitle[0]).toBe(`Formation rates k_f in %/month (${FORMATION_ORDER_WHY}).`);
    expect(spec.description).not.toContain('lowest summed AICc');
  });

  it('keeps the loss figure as it was', () => {
    const lossSpec = arrheniusPlotSpec(loss) as unknown as Spec;
    expect(lossSpec.layer[0]!.encoding.y!.title).toBe('ln(k / 1/month)');
    expect(lossSpec.layer[1]!.data.values).toHaveLength(8);
    expect(lossSpec.description).toMatch(
      /^Arrhenius plot: ln k of the first order law \(lowest summed AICc; /,
    );
  });

  it('has a data table of ln k_f with every series, pooled point and the prediction', () => {
    const tables = figureDataTables({ analysis: formation } as never, formationSeries(0.002), [
      { id: 'arrhenius' } as never,
    ]);
    const table = tables.arrhenius!;
    expect(table.caption).toBe(
      'Formation rates k_f (zero order, the attribute increases) against 1000/T, with the fitted line and residual (ln k_f − line)',
    );
    expect(table.columns).toEqual([
      'Point',
      'Temperature',
      '1000/T (1/K)',
      'ln(k_f / %/month)',
      'Line: ln k_f',
      'Residual (ln k_f)',
      'Confidence interval (ln k_f)',
    ]);
    // 8 series, 4 pooled points, 1 prediction.
    expect(table.rows).toHaveLength(13);
  });
});
