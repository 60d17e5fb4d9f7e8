import { linearRegression } from 'simple-statistics';
import * as vega from 'vega';
import { compile, type TopLevelSpec } from 'vega-lite';
import { describe, expect, it } from 'vitest';
import { analyseDataset, type DatasetOptions } from '../kinetics/analyse-dataset.ts';
import type { Series } from '../kinetics/types.ts';
import { analysisFigures } from './analysis-figures.ts';
import { FIGURE_FONT } from './figure-config.ts';
import { confidenceBands, type StoredAnalysisResult } from './stored-result.ts';

// Invented first-order data (C0 = 100, k = 0.01/month at 25 °C, 0.06/month at 40 °C) with a fixed,
// hand-written noise pattern, so the test needs no random generator.
const NOISE = [0.21, -0.34, 0.12, 0.3, -0.18, -0.05, 0.26, -0.22];
const MONTHS = [0, 3, 6, 9, 12, 18, 24, 36];
function series(id: string, batch: string, temperatureC: number, k: number, shift: number): Series {
  return {
    id,
    batch,
    temperatureC,
    timeUnit: 'month',
    valueUnit: '% of label claim',
    observations: MONTHS.map((time, index) => ({
      time,
      value: 100 * Math.exp(-k * time) + NOISE[(index + shift) % NOISE.length]!,
      source: { row: index + 2, cell: `Sheet1!C${index + 2}` },
    })),
  };
}
const SERIES: Series[] = [
  series('A @ 25 °C', 'A', 25, 0.01, 0),
  series('B @ 25 °C', 'B', 25, 0.0105, 3),
  series('C @ 25 °C', 'C', 25, 0.0098, 5),
  series('A @ 40 °C', 'A', 40, 0.06, 1),
];
SERIES[1]!.observations[4]!.excluded = { reason: 'vial cracked (test)' };
const OPTIONS: DatasetOptions = {
  lowerLimit: 90,
  storageTemperatureC: 25,
  direction: 'decreasing',
  order: 1,
};

function build(): StoredAnalysisResult {
  const analysis = analyseDataset(SERIES, OPTIONS);
  return { analysis, confidenceBands: confidenceBands(analysis, SERIES, OPTIONS) };
}

function layerData(spec: Record<string, unknown>): Record<string, unknown>[][] {
  const found: Record<string, unknown>[][] = [];
  const visit = (node: Record<string, unknown>) => {
    const values = (node.data as { values?: unknown } | undefined)?.values;
    if (Array.isArray(values)) found.push(values as Record<string, unknown>[]);
    for (const key of ['layer', 'hconcat']) {
      for (const child of (node[key] as Record<string, unknown>[] | undefined) ?? []) visit(child);
    }
  };
  visit(spec);
  return found;
}

describe('analysisFigures', () => {
  const stored = build();
  const figures = analysisFigures(stored, SERIES, { lower: 90 }, 25);

  it('gives three figures per series, the Arrhenius plot and the Q1E plot of the storage condition', () => {
    expect(figures.map((figure) => figure.id)).toEqual([
      ...[0, 1, 2, 3].flatMap((index) => [
        `series-${index}-linearised`,
        `series-${index}-curves`,
        `series-${index}-residuals`,
      ]),
      'arrhenius',
      'q1e-25',
    ]);
    for (const figure of figures) expect((figure.spec.config as { font: string }).font).toBe(FIGURE_FONT);
  });

  it('is deterministic: the same result gives the same specs', () => {
    expect(JSON.stringify(analysisFigures(build(), SERIES, { lower: 90 }, 25))).toBe(JSON.stringify(figures));
  });

  it('every spec compiles with Vega-Lite and renders to SVG with Vega, with no NaN', async () => {
    for (const figure of figures) {
      const view = new vega.View(vega.parse(compile(figure.spec as unknown as TopLevelSpec).spec), {
        renderer: 'none',
      });
      const svg = await view.toSVG();
      view.finalize();
      expect(svg.startsWith('<svg'), figure.id).toBe(true);
      expect(svg, figure.id).not.toContain('NaN');
    }
  });

  it('draws the ln(value) line of the least-squares fit (checked against simple-statistics linearRegression)', () => {
    const first = SERIES[0]!;
    const reference = linearRegression(
      first.observations.map((point) => [point.time, Math.log(point.value)]),
    );
    const [, line] = layerData((figures[0]!.spec.hconcat as Record<string, unknown>[])[1]!);
    const [start, end] = line as { time: number; y: number }[];
    expect(start!.y).toBeCloseTo(reference.b + reference.m * start!.time, 10);
    expect(end!.y).toBeCloseTo(reference.b + reference.m * end!.time, 10);
  });

  it('draws the first-order curve as C0·e^(−kt) (integrated rate law, OpenStax Chemistry 2e §12.4)', () => {
    const model = stored.analysis.series[0]!.analysis!.models.find((candidate) => candidate.order === 1)!;
    const curves = layerData(figures[1]!.spec).find((values) => values.some((datum) => 'law' in datum))!;
    const firstOrder = curves.filter((datum) => String(datum.law).startsWith('first order'));
    expect(firstOrder.length).toBeGreaterThan(10);
    for (const datum of firstOrder) {
      const expected = model.c0! * Math.exp(-model.k! * (datum.time as number));
      expect(Math.abs((datum.value as number) - expected) / expected).toBeLessThan(1e-12);
    }
  });

  it('keeps an excluded point on the plot, marked as excluded with its reason', () => {
    const points = layerData(figures[4]!.spec).find((values) => values.some((datum) => 'status' in datum))!;
    expect(points.filter((datum) => datum.status === 'excluded')).toEqual([
      expect.objectContaining({ time: 12, reason: 'vial cracked (test)' }),
    ]);
  });

  it('plots the Arrhenius points at 1000/T with T = θ + 273.15 K (IUPAC Gold Book, thermodynamic temperature)', () => {
    const arrhenius = figures.find((figure) => figure.id === 'arrhenius')!;
    const pooled = layerData(arrhenius.spec).find((values) =>
      values.some((datum) => 'seriesCount' in datum),
    )!;
    expect(pooled.map((datum) => datum.x)).toEqual([1000 / 298.15, 1000 / 313.15]);
  });
});
