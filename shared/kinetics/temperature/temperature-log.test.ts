import { describe, expect, it } from 'vitest';
import { KineticsError } from '../numeric/kinetics-error.ts';
import { assessTemperatureLog, type TemperatureReading } from './temperature-log.ts';

/** Relative tolerance for the same formula evaluated two ways in double precision. */
const SAME_COMPUTATION = 1e-12;

/** ΔH/R with the USP <1160> constants: 83 144 J/mol / 8.3144 J/(mol·K) = 10 000 K. */
const C = 83_144 / 8.3144;

/**
 * Haynes' formula as USP <1160> prints it, written out directly (no log-sum-exp, no shared code):
 * MKT = (ΔH/R) / −ln(Σ wᵢ·e^(−ΔH/RTᵢ) / Σ wᵢ), with equal weights for the plain formula.
 */
function uspFormula(temperaturesC: number[], weights = temperaturesC.map(() => 1)): number {
  const total = weights.reduce((sum, w) => sum + w, 0);
  const mean =
    temperaturesC.reduce((sum, t, i) => sum + (weights[i] ?? 0) * Math.exp(-C / (t + 273.15)), 0) / total;
  return C / -Math.log(mean) - 273.15;
}

function hourly(temperaturesC: number[], start = 0): TemperatureReading[] {
  return temperaturesC.map((temperatureC, i) => ({ time: start + i, temperatureC }));
}

describe('assessTemperatureLog: mean kinetic temperature (USP <1160>, Haynes 1971)', () => {
  it('gives the plain USP <1160> formula for equally spaced readings', () => {
    // Check value computed with the USP constants (docs/methods.md#mean-kinetic-temperature):
    // the monthly means below give 23.828 °C.
    const monthly = [18, 19, 21, 23, 25, 27, 29, 28, 26, 23, 20, 18];
    const result = assessTemperatureLog(hourly(monthly));
    expect(result.weighting).toBe('equal');
    expect(result.mktC).toBeCloseTo(23.828, 3);
    expect(Math.abs(result.mktC - uspFormula(monthly)) / uspFormula(monthly)).toBeLessThan(SAME_COMPUTATION);
    expect(result.meanC).toBeCloseTo(23.083333333, 8);
    expect(result.minC).toBe(18);
    expect(result.maxC).toBe(29);
    expect(result.duration).toBe(11);
    expect(result.coveredDuration).toBe(12);
    expect(result.gaps).toEqual([]);
  });

  it('equal time at 20 °C and 30 °C gives 26.260 °C (computed with the USP constants)', () => {
    expect(assessTemperatureLog(hourly([20, 30, 20, 30])).mktC).toBeCloseTo(26.26, 3);
  });

  it('weights uneven readings by half the interval to each neighbour', () => {
    // Times 0, 1, 3: median interval 1.5. Reading 1 covers [−0.75, 0.5] = 1.25, reading 2
    // [0.5, 2] = 1.5, reading 3 [2, 3.75] = 1.75 (the rule in docs/methods.md#temperature-logs).
    const readings = [
      { time: 0, temperatureC: 20 },
      { time: 1, temperatureC: 35 },
      { time: 3, temperatureC: 22 },
    ];
    const result = assessTemperatureLog(readings);
    expect(result.weighting).toBe('by-duration');
    expect(result.coveredDuration).toBeCloseTo(4.5, 12);
    const expected = uspFormula([20, 35, 22], [1.25, 1.5, 1.75]);
    expect(Math.abs(result.mktC - expected) / expected).toBeLessThan(SAME_COMPUTATION);
    expect(result.meanC).toBeCloseTo((20 * 1.25 + 35 * 1.5 + 22 * 1.75) / 4.5, 12);
  });

  it('reports a gap and never bridges it', () => {
    // Hourly readings 0–5 h, nothing until 20 h, hourly again to 25 h: the 15 h interval is over
    // twice the 1 h median, so it is a gap; each reading still covers one hour.
    const readings = [...hourly([20, 21, 22, 23, 24, 25]), ...hourly([30, 31, 32, 33, 34, 35], 20)];
    const result = assessTemperatureLog(readings);
    expect(result.gaps).toEqual([{ start: 5, end: 20, duration: 15 }]);
    expect(result.coveredDuration).toBe(12);
    expect(result.duration).toBe(25);
    const temperatures = readings.map((r) => r.temperatureC);
    expect(result.mktC).toBeCloseTo(uspFormula(temperatures), 10);
  });

  it('takes a stated longest interval instead of twice the median', () => {
    const readings = hourly([20, 21, 22]).concat([{ time: 4, temperatureC: 23 }]);
    expect(assessTemperatureLog(readings).gaps).toEqual([]);
    expect(assessTemperatureLog(readings, { maxInterval: 1.5 }).gaps).toEqual([
      { start: 2, end: 4, duration: 2 },
    ]);
  });

  it('finds each excursion with its start, duration and peak, and the time outside the range', () => {
    const readings = hourly([20, 20, 30, 32, 20, 1, 20]);
    const result = assessTemperatureLog(readings, { rangeC: { minC: 2, maxC: 25 } });
    expect(result.excursions).toEqual([
      { side: 'above', start: 1.5, end: 3.5, duration: 2, peakC: 32, peakTime: 3, readings: 2 },
      { side: 'below', start: 4.5, end: 5.5, duration: 1, peakC: 1, peakTime: 5, readings: 1 },
    ]);
    expect(result.timeAbove).toBe(2);
    expect(result.timeBelow).toBe(1);
  });

  it('ends an excursion at a gap: nothing is known inside it', () => {
    const readings = [...hourly([20, 30, 30]), ...hourly([30, 30, 20], 10)];
    const result = assessTemperatureLog(readings, { rangeC: { maxC: 25 } });
    expect(result.excursions.map((e) => [e.start, e.end])).toEqual([
      [0.5, 2.5],
      [9.5, 11.5],
    ]);
    expect(result.timeAbove).toBe(4);
    expect(result.timeBelow).toBe(0);
  });

  it('gives no time outside when no range is stated', () => {
    const result = assessTemperatureLog(hourly([20, 40]));
    expect(result.timeAbove).toBeNull();
    expect(result.excursions).toEqual([]);
  });

  it('finds the warm day the whole-log figure dilutes, with rolling windows', () => {
    // Nine days at 20 °C and one day at 30 °C, hourly readings; 24 h windows stepping 1 h.
    const temperatures = [...Array(216).fill(20), ...Array(24).fill(30)];
    const result = assessTemperatureLog(hourly(temperatures), { windowLength: 24, windowStep: 1 });
    expect(result.mktC).toBeCloseTo(uspFormula(temperatures), 10);
    expect(result.mktC).toBeLessThan(22);
    // The log covers [−0.5, 239.5]: windows start at −0.5, 0.5, …, 215.5 (217 windows).
    expect(result.windows).toHaveLength(217);
    expect(result.warmestWindow?.mktC).toBeCloseTo(30, 10);
    expect(result.warmestWindow?.start).toBe(215.5);
    // A window straddling the change: 12 h at 20 °C and 12 h at 30 °C is the two-temperature formula.
    const straddling = result.windows.find((w) => w.start === 203.5);
    expect(straddling?.mktC).toBeCloseTo(uspFormula([20, 30]), 10);
    expect(straddling?.coveredDuration).toBe(24);
  });

  it('gives no windows for a log shorter than one window', () => {
    const result = assessTemperatureLog(hourly([20, 21, 22]), { windowLength: 24 });
    expect(result.windows).toEqual([]);
    expect(result.warmestWindow).toBeNull();
  });

  it('ends the last window with the log when the step does not fit evenly', () => {
    const result = assessTemperatureLog(hourly(Array(10).fill(20)), { windowLength: 4, windowStep: 4 });
    expect(result.windows.map((w) => w.start)).toEqual([-0.5, 3.5, 5.5]);
  });

  it('uses a stated activation energy', () => {
    const result = assessTemperatureLog(hourly([20, 30]), { activationEnergy: 60_000 });
    const c = 60_000 / 8.3144;
    const expected = c / -Math.log((Math.exp(-c / 293.15) + Math.exp(-c / 303.15)) / 2) - 273.15;
    expect(result.mktC).toBeCloseTo(expected, 10);
    expect(result.activationEnergy).toBe(60_000);
  });

  it('reads 100,000 readings without overflowing the stack', () => {
    const temperatures = Array.from({ length: 100_000 }, (_, i) => 20 + 5 * Math.sin(i / 500));
    const result = assessTemperatureLog(hourly(temperatures), { windowLength: 720 });
    expect(result.readings).toBe(100_000);
    expect(result.mktC).toBeCloseTo(uspFormula(temperatures), 8);
    expect(result.windows.length).toBeGreaterThan(100);
  });

  it('refuses unusable logs with a clear reason', () => {
    const refuse =
      (readings: TemperatureReading[], options = {}) =>
      () =>
        assessTemperatureLog(readings, options);
    expect(refuse([{ time: 0, temperatureC: 20 }])).toThrow(KineticsError);
    expect(refuse(hourly([20, 21]).reverse())).toThrow(/increase strictly/);
    expect(
      refuse([
        { time: 0, temperatureC: -300 },
        { time: 1, temperatureC: 20 },
      ]),
    ).toThrow(/absolute zero/);
    expect(refuse(hourly([20, 21]), { rangeC: { minC: 30, maxC: 20 } })).toThrow(/minimum above/);
    expect(refuse(hourly([20, 21]), { windowLength: 0 })).toThrow(/windowLength/);
  });
});
