import { describe, expect, it } from 'vitest';
import { FORMATION_ORDER_WHY } from '../../../shared/figures/arrhenius-rate-words.ts';
import { confidenceBands } from '../../../shared/figures/stored-result.ts';
import { analyseDataset } from '../../../shared/kinetics/analyse-dataset.ts';
import { formationSeries, LOSS_CASES } from '../../../shared/kinetics/dataset-arrhenius-fixture.ts';
import type { Series } from '../../../shared/kinetics/types.ts';
import { analysisCsv } from './analysis-export.ts';
import { fixtureRun } from './analysis-run-fixture.ts';
import { type AnalysisRunRecord, engineOptions } from './analysis-runs.ts';
import { temperatureSheet } from './analysis-temperature-sheet.ts';
import { analysisPageModel } from './analysis-view.ts';

/*
 * The analysis page and exports of an attribute that increases, whose Arrhenius line engine 0.4.0
 * fits to the zero-order formation rate k_f = −k₀ (`rateSense` 'formation', `orderSource`
 * 'formation'): they say "formation rate" and why the order is zero, never "lowest summed AICc"
 * or "k". Data: the invented degradant of `dataset-arrhenius-fixture.ts` (0.05 % per month at
 * 25 °C, Ea = 90 kJ/mol, two batches at each of 25, 30, 40 and 50 °C).
 */

/** The fixture's run on other series and limits: by default a degradant's (≤ 1 %, increasing). */
function runOf(
  order?: 0 | 1,
  series: Series[] = formationSeries(0.002),
  patch: Record<string, unknown> = { direction: 'increasing', lowerLimit: null, upperLimit: 1 },
): AnalysisRunRecord {
  const base = fixtureRun(false);
  const study = { ...base.study, ...patch };
  const analyst = { ...base.options.analyst, ...(order === undefined ? {} : { order }) };
  const settings = engineOptions(analyst, study as AnalysisRunRecord['study']);
  const analysis = analyseDataset(series, settings);
  return {
    ...base,
    study: study as AnalysisRunRecord['study'],
    series,
    options: { analyst, engine: settings },
    result: { analysis, confidenceBands: confidenceBands(analysis, series, settings) },
    methodStatement: analysis.methodStatement.text,
  };
}

const text = (sheet: ReturnType<typeof temperatureSheet>) =>
  [...sheet.records()].map((record) => record.cells.map((cell) => String(cell ?? '')).join(' | '));

describe('the analysis page of an attribute fitted on its formation rate', () => {
  const run = runOf();
  const model = analysisPageModel(run, true);
  const arrhenius = model.arrhenius!;

  it('says why the order is zero and what the rates are, with their unit', () => {
    expect(run.result.analysis.arrhenius!.orderSource).toBe('formation');
    expect(arrhenius.order).toBe('zero order');
    expect(arrhenius.orderSource).toBe(FORMATION_ORDER_WHY);
    expect(arrhenius.formation).toEqual({ unit: '%/month' });
    expect(arrhenius.rows.map((row) => row.label)).toEqual(
      expect.arrayContaining([
        'Formation rate k_f at 25 °C (2 series)',
        'Formation rate k_f at 50 °C (2 series)',
        'Formation rate k_f predicted at 25 °C',
        'R² of ln k_f against 1/T',
      ]),
    );
    expect(arrhenius.rows.some((row) => row.label.startsWith('k '))).toBe(false);
    expect(arrhenius.figure?.description).toContain('ln k_f');
  });

  it('gives the verdict in the same words, never "lowest summed AICc"', () => {
    const sentence = model.summary.find((line) => line.startsWith('Arrhenius'))!;
    expect(sentence).toMatch(
      new RegExp(
        `^Arrhenius \\(${FORMATION_ORDER_WHY}\\): Ea = \\S+ kJ/mol \\(95 % CI .+\\); formation rate k_f predicted at 25 °C \\S+ %/month`,
      ),
    );
    expect(model.summary.join(' ')).not.toContain('lowest summed AICc');
    expect(model.summary.join(' ')).not.toContain('rate constants');
  });

  it('writes the CSV and the workbook sheet "Arrhenius and Q1E" with the formation labels', () => {
    const csv = analysisCsv(run);
    expect(csv).toContain('Formation rate k_f at 30 °C (2 series)');
    expect(csv).toContain('Formation rate k_f predicted at 25 °C');
    expect(csv).toContain('R² of ln k_f against 1/T');
    expect(csv).not.toMatch(/,k at \d+ °C/);
    const rows = text(temperatureSheet(run));
    expect(rows).toEqual(
      expect.arrayContaining([
        expect.stringMatching(/^Formation rate k_f predicted at 25 °C \| [\d.]+ \| .* \| %\/month \| /),
      ]),
    );
    expect(rows.some((row) => row.startsWith('k '))).toBe(false);
  });

  it('an analyst’s first order on it gives no fit, and the page does not call it a formation rate', () => {
    const fixed = analysisPageModel(runOf(1), true).arrhenius!;
    expect(fixed.orderSource).toBe('fixed by the analyst');
    expect(fixed.formation).toBeUndefined();
    expect(fixed.notApplicable).toMatch(/^the attribute increases, and the first-order law describes a loss/);
    expect(fixed.rows).toEqual([]);
  });
});

describe('the analysis page of a falling attribute', () => {
  it('keeps the words of k and its order source, with no formation entry', () => {
    // A first-order assay loss at 25–50 °C (`LOSS_CASES`), ≥ 95 %, decreasing.
    const run = runOf(undefined, LOSS_CASES[0]!.series, {
      direction: 'decreasing',
      lowerLimit: 95,
      upperLimit: null,
    });
    const model = analysisPageModel(run, true);
    const arrhenius = model.arrhenius!;
    expect(run.result.analysis.arrhenius!.rateSense).toBe('loss');
    expect(arrhenius.orderSource).toBe('lowest summed AICc');
    expect('formation' in arrhenius && arrhenius.formation !== undefined).toBe(false);
    expect(arrhenius.rows.map((row) => row.label)).toEqual(
      expect.arrayContaining(['k at 25 °C (2 series)', 'k predicted at 25 °C', 'R² of ln k against 1/T']),
    );
    expect(arrhenius.rows.map((row) => row.label).join(' ')).not.toContain('formation');
    expect(model.summary.find((line) => line.startsWith('Arrhenius'))).toMatch(
      /^Arrhenius \(first order rate constants, the order with the lowest summed AICc over the series\): Ea = .*; k predicted at 25 °C /,
    );
    expect(analysisCsv(run)).toContain('k at 25 °C (2 series)');
  });
});
