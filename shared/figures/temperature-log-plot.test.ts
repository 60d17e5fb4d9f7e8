import { describe, expect, it } from 'vitest';
import { drawnReadings } from './temperature-log-plot.ts';

describe('drawnReadings (what the temperature-log figure draws)', () => {
  const readings = Array.from({ length: 100_000 }, (_, i) => ({
    time: i,
    temperatureC: 20 + Math.sin(i / 300) + (i === 54_321 ? 15 : 0) + (i === 77_777 ? -12 : 0),
  }));

  it('draws every reading of a short log, in segments split at each gap', () => {
    const short = readings.slice(0, 10);
    const drawn = drawnReadings(short, { gaps: [{ start: 4, end: 5, duration: 1 }], range: null });
    expect(drawn.total).toBe(10);
    expect(drawn.points.map((p) => p.segment)).toEqual([0, 0, 0, 0, 0, 1, 1, 1, 1, 1]);
  });

  it('keeps the extremes and every reading outside the range when it reduces a long log', () => {
    const drawn = drawnReadings(readings, { gaps: [], range: { minC: 10, maxC: 30 } });
    expect(drawn.total).toBe(100_000);
    expect(drawn.points.length).toBeLessThanOrEqual(2_000 + 4);
    const temperatures = drawn.points.map((p) => p.temperatureC);
    expect(Math.max(...temperatures)).toBe(Math.max(...readings.map((r) => r.temperatureC)));
    expect(Math.min(...temperatures)).toBe(Math.min(...readings.map((r) => r.temperatureC)));
    expect(drawn.points.filter((p) => p.outside).map((p) => p.time)).toEqual([54_321, 77_777]);
    // In time order, first and last reading kept.
    expect(drawn.points[0]?.time).toBe(0);
    expect(drawn.points.at(-1)?.time).toBe(99_999);
    expect(drawn.points.every((p, i, all) => i === 0 || p.time > (all[i - 1]?.time ?? -1))).toBe(true);
  });
});
