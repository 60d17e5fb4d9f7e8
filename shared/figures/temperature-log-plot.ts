import type { TemperatureLogDocument } from '../kinetics/temperature/temperature-log-document.ts';
import { SECONDS_PER_TIME_UNIT } from '../kinetics/units.ts';
import { FIGURE_CONFIG, PALETTE, TOOLTIP_FORMAT, timeTitle, VEGA_LITE_SCHEMA } from './figure-config.ts';

/** Most readings the figure draws; a longer log is reduced to each bucket's lowest and highest. */
export const MAX_DRAWN_READINGS = 2000;

export interface DrawnReading {
  time: number;
  temperatureC: number;
  /** Readings between two gaps form one segment; the line is broken at each gap. */
  segment: number;
  outside: boolean;
}

/**
 * The readings a figure draws: all of them up to `maximum`, otherwise, per equal run of readings,
 * the coldest and the warmest (in time order), and every reading outside the labelled range — so
 * no excursion and no extreme is lost from the picture. The figure says "n of N readings drawn".
 *
 * Throws nothing. Example: 100 000 readings with `maximum` 2000 give at most 2000 plus the
 * readings outside the range, with the log's minimum and maximum among them.
 */
export function drawnReadings(
  readings: readonly { time: number; temperatureC: number }[],
  document: Pick<TemperatureLogDocument, 'gaps' | 'range'>,
  maximum = MAX_DRAWN_READINGS,
): { points: DrawnReading[]; total: number } {
  const gapStarts = new Set(document.gaps.map((gap) => gap.start));
  const minC = document.range?.minC ?? Number.NEGATIVE_INFINITY;
  const maxC = document.range?.maxC ?? Number.POSITIVE_INFINITY;
  let segment = 0;
  const all: DrawnReading[] = readings.map((reading) => {
    const point = {
      time: reading.time,
      temperatureC: reading.temperatureC,
      segment,
      outside: reading.temperatureC < minC || reading.temperatureC > maxC,
    };
    if (gapStarts.has(reading.time)) segment += 1;
    return point;
  });
  if (all.length <= maximum) return { points: all, total: all.length };
  const bucket = Math.ceil(all.length / (maximum / 2));
  const kept = new Set<number>();
  for (let start = 0; start < all.length; start += bucket) {
    let low = start;
    let high = start;
    for (let i = start; i < Math.min(start + bucket, all.length); i += 1) {
      const t = (all[i] as DrawnReading).temperatureC;
      if (t < (all[low] as DrawnReading).temperatureC) low = i;
      if (t > (all[high] as DrawnReading).temperatureC) high = i;
      if ((all[i] as DrawnReading).outside) kept.add(i);
    }
    kept.add(low);
    kept.add(high);
  }
  // The readings beside each gap, so each segment starts and ends where the logger did.
  all.forEach((point, i) => {
    if (gapStarts.has(point.time)) {
      kept.add(i);
      kept.add(i + 1);
    }
  });
  kept.add(0);
  kept.add(all.length - 1);
  const points = [...kept]
    .filter((i) => i < all.length)
    .sort((a, b) => a - b)
    .map((i) => all[i] as DrawnReading);
  return { points, total: all.length };
}

/**
 * The temperature-log figure: temperature against time as a line broken at each gap, the labelled
 * range as dashed rules, and readings outside the range as triangles (shape as well as colour, so
 * an excursion reads without colour), as a Vega-Lite spec.
 *
 * Time is the date-time when the log has them, else elapsed time in the log's unit.
 *
 * Throws nothing. Example: the store-room log gives one line in two segments (the outage), rules
 * at 15 and 25 °C and six triangles at the 15 July spike.
 */
export function temperatureLogPlotSpec(
  document: TemperatureLogDocument,
  drawn: { points: DrawnReading[]; total: number },
): Record<string, unknown> {
  const start = document.startAt === null ? null : Date.parse(document.startAt);
  const secondsPerUnit = SECONDS_PER_TIME_UNIT[document.timeUnit];
  const values = drawn.points.map((point) => ({
    ...(start === null
      ? { time: point.time }
      : { time: new Date(start + point.time * secondsPerUnit * 1000).toISOString() }),
    temperatureC: point.temperatureC,
    segment: point.segment,
    where: point.outside ? 'outside the labelled range' : 'within the range',
  }));
  const x =
    start === null
      ? { field: 'time', type: 'quantitative', title: timeTitle(document.timeUnit) }
      : {
          field: 'time',
          type: 'temporal',
          title: 'Recorded at (UTC)',
          axis: { format: '%d %b %H:%M', labelAngle: -30 },
        };
  const rules = [
    ...(document.range?.minC === null || document.range?.minC === undefined
      ? []
      : [{ limit: document.range.minC, label: `lowest labelled ${document.range.minC} °C` }]),
    ...(document.range?.maxC === null || document.range?.maxC === undefined
      ? []
      : [{ limit: document.range.maxC, label: `highest labelled ${document.range.maxC} °C` }]),
  ];
  const note =
    drawn.points.length === drawn.total
      ? `${drawn.total.toLocaleString('en-GB')} readings`
      : `${drawn.points.length.toLocaleString('en-GB')} of ${drawn.total.toLocaleString('en-GB')} readings drawn (each stretch's lowest and highest, and every reading outside the range)`;
  const layers: Record<string, unknown>[] = [
    {
      data: { values },
      mark: { type: 'line', color: PALETTE.ledger, strokeWidth: 1.25, interpolate: 'linear' },
      encoding: {
        x,
        y: { field: 'temperatureC', type: 'quantitative', title: 'Temperature (°C)', scale: { zero: false } },
        detail: { field: 'segment', type: 'nominal' },
        tooltip: [
          {
            field: 'time',
            type: start === null ? 'quantitative' : 'temporal',
            title: 'Time',
            ...(start === null ? { format: TOOLTIP_FORMAT } : { format: '%Y-%m-%d %H:%M' }),
          },
          { field: 'temperatureC', type: 'quantitative', title: '°C', format: TOOLTIP_FORMAT },
        ],
      },
    },
    {
      data: { values: values.filter((value) => value.where !== 'within the range') },
      mark: { type: 'point', shape: 'triangle-up', filled: true, size: 48, color: PALETTE.alert },
      encoding: {
        x,
        y: { field: 'temperatureC', type: 'quantitative' },
        tooltip: [
          {
            field: 'temperatureC',
            type: 'quantitative',
            title: '°C outside the range',
            format: TOOLTIP_FORMAT,
          },
        ],
      },
    },
  ];
  if (rules.length > 0) {
    layers.push({
      data: { values: rules },
      mark: { type: 'rule', color: PALETTE.alert, strokeDash: [6, 4], strokeWidth: 1.25 },
      encoding: {
        y: { field: 'limit', type: 'quantitative' },
        tooltip: [{ field: 'label', title: 'Range' }],
      },
    });
  }
  return {
    $schema: VEGA_LITE_SCHEMA,
    config: FIGURE_CONFIG,
    width: 640,
    height: 240,
    title: {
      text: 'Temperature log',
      subtitle: `${note}; line broken at ${document.gaps.length} gap${document.gaps.length === 1 ? '' : 's'}; triangles: readings outside the labelled range; dashed: the range`,
    },
    layer: layers,
  };
}
