import { compile, type TopLevelSpec } from 'vega-lite';
import { describe, expect, it } from 'vitest';
import { analyseDataset, type DatasetOptions } from '../kinetics/analyse-dataset.ts';
import type { Series } from '../kinetics/types.ts';
import { analysisFigures, type FigureSpec } from './analysis-figures.ts';
import { OUTLIER_SHAPE } from './figure-config.ts';
import { confidenceBands } from './stored-result.ts';

// Issue 17 §4: batches, laws and the "possible outlier" marker differ by shape or dash as well as
// by colour, and the legends show the shape or dash. Invented first-order data (C0 = 100) with a
// fixed, hand-written noise pattern; batch A at 25 °C has one point 3 units low at 18 months.
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
      value:
        100 * Math.exp(-k * time) +
        NOISE[(index + shift) % NOISE.length]! -
        (time === 18 && shift === 0 ? 3 : 0),
      source: { row: index + 2, cell: `Sheet1!C${index + 2}` },
    })),
  };
}
const SERIES: Series[] = [
  series('A @ 25 °C', 'A', 25, 0.004, 0),
  series('B @ 25 °C', 'B', 25, 0.0042, 3),
  series('C @ 25 °C', 'C', 25, 0.0038, 5),
  series('A @ 40 °C', 'A', 40, 0.06, 1),
  series('B @ 40 °C', 'B', 40, 0.062, 2),
];
const OPTIONS: DatasetOptions = { lowerLimit: 95, storageTemperatureC: 25, direction: 'decreasing' };

function figures(options: DatasetOptions = OPTIONS): FigureSpec[] {
  const analysis = analyseDataset(SERIES, options);
  const stored = { analysis, confidenceBands: confidenceBands(analysis, SERIES, options) };
  return analysisFigures(stored, SERIES, { lower: 95 }, 25);
}

interface Layer {
  mark: { type?: string } | string;
  values: Record<string, unknown>[];
  encoding: Record<string, { field?: string; scale?: { domain?: unknown[]; range?: unknown[] } }>;
}
function layers(spec: Record<string, unknown>): Layer[] {
  const found: Layer[] = [];
  const visit = (node: Record<string, unknown>) => {
    if (node.encoding)
      found.push({
        mark: node.mark as Layer['mark'],
        values: ((node.data as { values?: Layer['values'] } | undefined)?.values ?? []) as Layer['values'],
        encoding: node.encoding as Layer['encoding'],
      });
    for (const key of ['layer', 'hconcat']) {
      for (const child of (node[key] as Record<string, unknown>[] | undefined) ?? []) visit(child);
    }
  };
  visit(spec);
  return found;
}
const markType = (layer: Layer) => (typeof layer.mark === 'string' ? layer.mark : layer.mark.type);
const byId = (list: FigureSpec[], id: string) => list.find((figure) => figure.id === id)!;
/** The compiled Vega legends of a figure, each with the channels (scales) it shows. */
function legends(figure: FigureSpec): Record<string, unknown>[] {
  return (compile(figure.spec as unknown as TopLevelSpec).spec.legends ?? []) as Record<string, unknown>[];
}
/** Each batch or law gets a different entry of the range: as many distinct entries as the domain. */
function distinctPerValue(channel: { scale?: { domain?: unknown[]; range?: unknown[] } }) {
  const domain = channel.scale?.domain ?? [];
  const range = (channel.scale?.range ?? []).slice(0, domain.length).map((entry) => JSON.stringify(entry));
  return { domain: domain.length, distinct: new Set(range).size };
}

describe('figures carry their meaning without colour', () => {
  const list = figures();

  it('the Q1E plot gives each batch a point shape and each line a dash, and its legends show them', () => {
    const q1e = byId(list, 'q1e-25');
    const points = layers(q1e.spec).find((layer) => markType(layer) === 'point')!;
    const lines = layers(q1e.spec).find((layer) => markType(layer) === 'line')!;
    expect(points.encoding.color?.field).toBe('group');
    expect(points.encoding.shape?.field).toBe('group');
    expect(points.encoding.shape?.scale?.domain).toEqual(points.encoding.color?.scale?.domain);
    const shapes = distinctPerValue(points.encoding.shape!);
    expect(shapes.domain).toBeGreaterThanOrEqual(3);
    expect(shapes.distinct).toBe(shapes.domain);
    // The dash is a field of its own (one value per line), not a constant or a mean/limit switch.
    expect(lines.encoding.strokeDash?.field).toBe('line');
    expect(lines.values.every((datum) => datum.line === datum.group)).toBe(true);
    const dashes = distinctPerValue(lines.encoding.strokeDash!);
    expect(dashes.distinct).toBe(dashes.domain);
    const shown = legends(q1e);
    expect(shown.some((legend) => legend.shape && legend.fill)).toBe(true);
    expect(shown.some((legend) => legend.strokeDash && legend.symbolType === 'stroke')).toBe(true);
  });

  it('the Arrhenius plot gives each batch a shape as well as a colour, in one legend', () => {
    const arrhenius = byId(list, 'arrhenius');
    const batchLayer = layers(arrhenius.spec).find((layer) => layer.encoding.color?.field === 'batch')!;
    expect(batchLayer.encoding.shape?.field).toBe('batch');
    expect(batchLayer.encoding.shape?.scale?.domain).toEqual(['A', 'B', 'C']);
    const shapes = distinctPerValue(batchLayer.encoding.shape!);
    expect(shapes.distinct).toBe(3);
    expect(legends(arrhenius)).toEqual([
      expect.objectContaining({ shape: expect.any(String), title: 'Batch' }),
    ]);
  });

  it('the fitted curves give each law its own dash as well as its own colour, shown in the legend', () => {
    for (const figure of list.filter((entry) => entry.id.endsWith('-curves'))) {
      const curves = layers(figure.spec).find((layer) => markType(layer) === 'line')!;
      expect(curves.encoding.strokeDash?.field, figure.id).toBe('law');
      const dashes = distinctPerValue(curves.encoding.strokeDash!);
      expect(dashes.domain, figure.id).toBeGreaterThanOrEqual(3);
      expect(dashes.distinct, figure.id).toBe(dashes.domain);
      expect(curves.encoding.strokeDash?.scale?.domain).toEqual(curves.encoding.color?.scale?.domain);
      expect(
        legends(figure).some(
          (legend) => legend.strokeDash && legend.stroke && legend.symbolType === 'stroke',
        ),
        figure.id,
      ).toBe(true);
    }
  });

  it('marks a possible outlier with its own shape, not only red, and says so in the subtitle', () => {
    const residuals = byId(list, 'series-0-residuals');
    const points = layers(residuals.spec).find((layer) => markType(layer) === 'point')!;
    expect(points.values.filter((datum) => datum.flag === 'possible outlier')).toEqual([
      expect.objectContaining({ time: 18 }),
    ]);
    expect(points.encoding.shape).toEqual(
      expect.objectContaining({
        field: 'flag',
        scale: { domain: ['within threshold', 'possible outlier'], range: ['circle', OUTLIER_SHAPE] },
      }),
    );
    expect(OUTLIER_SHAPE).not.toBe('circle');
    expect(legends(residuals).some((legend) => legend.shape)).toBe(true);
    expect(
      ([] as string[]).concat((residuals.spec.title as { subtitle: string[] }).subtitle).join(' '),
    ).toMatch(/Red triangles: \|externally studentised residual\|/);
  });

  it('a series without outliers still draws its points as circles (no outlier shape in the data)', () => {
    const residuals = byId(list, 'series-1-residuals');
    const points = layers(residuals.spec).find((layer) => markType(layer) === 'point')!;
    expect(points.values.every((datum) => datum.flag === 'within threshold')).toBe(true);
  });
});
