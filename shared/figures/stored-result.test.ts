import { describe, expect, it } from 'vitest';
import { analyseDataset, type DatasetOptions } from '../kinetics/analyse-dataset.ts';
import type { Series } from '../kinetics/types.ts';
import { analyseForStorage, BAND_POINTS, confidenceBands } from './stored-result.ts';

// Invented series with a fixed, hand-written noise pattern (no random generator): first-order
// assay data, zero-order impurity growth, a series with a negative value, extreme magnitudes
// (scaled by powers of two inside the engine), one too short to analyse, and one with a law
// that cannot be fitted.
const NOISE = [0.21, -0.34, 0.12, 0.3, -0.18, -0.05, 0.26, -0.22];
const MONTHS = [0, 3, 6, 9, 12, 18, 24, 36];
function series(id: string, temperatureC: number, value: (month: number, index: number) => number): Series {
  return {
    id,
    batch: id.slice(0, 1),
    temperatureC,
    timeUnit: 'month',
    valueUnit: '% of label claim',
    observations: MONTHS.map((time, index) => ({ time, value: value(time, index) })),
  };
}
const firstOrder = (k: number, shift: number) => (time: number, index: number) =>
  100 * Math.exp(-k * time) + NOISE[(index + shift) % NOISE.length]!;
const LISTS: Record<string, Series[]> = {
  'first order at two temperatures': [
    series('A @ 25 °C', 25, firstOrder(0.01, 0)),
    series('B @ 25 °C', 25, firstOrder(0.0105, 3)),
    series('A @ 40 °C', 40, firstOrder(0.06, 1)),
  ],
  'zero-order growth and a negative value': [
    series('I @ 25 °C', 25, (time, index) => 0.02 * time + NOISE[index]! / 20),
    series('N @ 25 °C', 25, (time, index) => (index === 0 ? -0.01 : 0.015 * time + NOISE[index]! / 30)),
  ],
  'extreme magnitudes and a series too short': [
    series('tiny @ 25 °C', 25, (time, index) => 1e-200 * firstOrder(0.02, index)(time, index)),
    series('huge @ 25 °C', 25, (time, index) => 1e200 * firstOrder(0.02, index)(time, index)),
    { ...series('short @ 25 °C', 25, firstOrder(0.01, 0)), observations: [{ time: 0, value: 100 }] },
  ],
};
const OPTION_SETS: Record<string, DatasetOptions> = {
  'engine choice': { lowerLimit: 90, storageTemperatureC: 25, direction: 'decreasing' },
  'order fixed at zero': { order: 0, confidenceLevel: 0.9 },
  'working order from the study': { workingOrder: { order: 1, reason: 'protocol (test)' } },
  'proportional error': { errorModel: 'proportional' },
};

describe('analyseForStorage', () => {
  for (const [listName, list] of Object.entries(LISTS)) {
    for (const [optionName, options] of Object.entries(OPTION_SETS)) {
      it(`gives the bands of a second analysis, to the bit, from the first fit (${listName}, ${optionName})`, () => {
        let stored: ReturnType<typeof analyseForStorage> | Error;
        let reference: ReturnType<typeof analyseForStorage> | Error;
        try {
          stored = analyseForStorage(list, options);
        } catch (error) {
          stored = error as Error;
        }
        try {
          const analysis = analyseDataset(list, options);
          reference = { analysis, confidenceBands: confidenceBands(analysis, list, options) };
        } catch (error) {
          reference = error as Error;
        }
        // toStrictEqual compares numbers with Object.is: -0 and 0 differ, NaN equals NaN.
        expect(stored).toStrictEqual(reference);
        if (!(stored instanceof Error)) {
          expect(JSON.stringify(stored)).toBe(JSON.stringify(reference));
          for (const band of stored.confidenceBands) expect([0, BAND_POINTS]).toContain(band.points.length);
        }
      });
    }
  }

  it('stores a band for every series that names an order, and none for a series not analysed', () => {
    const list = LISTS['extreme magnitudes and a series too short']!;
    const stored = analyseForStorage(list, { order: 1 });
    expect(stored.confidenceBands.map((band) => band.seriesId)).toEqual(['tiny @ 25 °C', 'huge @ 25 °C']);
    expect(stored.analysis.series[2]!.analysis).toBeNull();
    const huge = stored.confidenceBands[1]!;
    expect(huge.points[0]!.time).toBe(0);
    expect(huge.points[BAND_POINTS - 1]!.time).toBe(36);
    expect(huge.points[0]!.estimate!).toBeGreaterThan(1e201);
  });
});
