import { describe, expect, it } from 'vitest';
import { arrheniusFit } from './arrhenius-fit.ts';
import { excursionImpact } from './excursion-impact.ts';
import { predictRateConstant } from './predict-rate-constant.ts';

/**
 * 2 HI → H2 + I2 (McMurry & Fay, Chemistry, Worked Example 12.13; the Arrhenius tests' data set):
 * five rate constants from 283 to 508 °C, a real fit with scatter and standard errors.
 */
const fit = arrheniusFit([
  { temperatureC: 283, rateConstant: 3.52e-7 },
  { temperatureC: 356, rateConstant: 3.02e-5 },
  { temperatureC: 393, rateConstant: 2.19e-4 },
  { temperatureC: 427, rateConstant: 1.16e-3 },
  { temperatureC: 508, rateConstant: 3.95e-2 },
]);
const SAME_COMPUTATION = 1e-10;
const relative = (a: number, b: number) => Math.abs(a - b) / Math.abs(b);

const base = {
  fit,
  order: 0 as const,
  storageTemperatureC: 300,
  rateTimeUnit: 's' as const,
  logTimeUnit: 's' as const,
  direction: 'decreasing' as const,
};

describe('excursionImpact (Arrhenius: what a temperature log cost)', () => {
  it('a log held at the storage temperature costs exactly its own duration', () => {
    const impact = excursionImpact({ ...base, held: [{ temperatureC: 300, duration: 3600 }] });
    expect(impact.equivalentDuration.estimate).toBeCloseTo(3600, 8);
    expect(impact.extraDuration.estimate).toBeCloseTo(0, 6);
    // The ratio k(T)/k(Ts) is 1 whatever the slope, so the interval collapses onto it.
    expect(impact.equivalentDuration.interval?.[0]).toBeCloseTo(3600, 6);
    expect(impact.equivalentDuration.interval?.[1]).toBeCloseTo(3600, 6);
  });

  it('the equivalent time is the ratio of the predicted rate constants (predictRateConstant)', () => {
    const impact = excursionImpact({ ...base, held: [{ temperatureC: 400, duration: 60 }] });
    const ratio = predictRateConstant(fit, 400).rateConstant / predictRateConstant(fit, 300).rateConstant;
    expect(relative(impact.equivalentDuration.estimate, 60 * ratio)).toBeLessThan(SAME_COMPUTATION);
    expect(impact.extrapolation).toEqual({ belowC: null, aboveC: null });
  });

  it('∫k dt over one held temperature has the interval of k there (same line, same t)', () => {
    const impact = excursionImpact({ ...base, held: [{ temperatureC: 400, duration: 60 }] });
    const k = predictRateConstant(fit, 400);
    expect(relative(impact.integratedRate.estimate, 60 * k.rateConstant)).toBeLessThan(SAME_COMPUTATION);
    const [low, high] = impact.integratedRate.interval!;
    expect(relative(low, 60 * k.confidenceInterval![0])).toBeLessThan(1e-9);
    expect(relative(high, 60 * k.confidenceInterval![1])).toBeLessThan(1e-9);
  });

  it('sums the held periods: two temperatures add their equivalent times', () => {
    const one = excursionImpact({ ...base, held: [{ temperatureC: 350, duration: 10 }] });
    const two = excursionImpact({ ...base, held: [{ temperatureC: 420, duration: 5 }] });
    const both = excursionImpact({
      ...base,
      held: [
        { temperatureC: 350, duration: 10 },
        { temperatureC: 420, duration: 5 },
      ],
    });
    expect(
      relative(
        both.equivalentDuration.estimate,
        one.equivalentDuration.estimate + two.equivalentDuration.estimate,
      ),
    ).toBeLessThan(SAME_COMPUTATION);
    expect(both.loggedDuration).toBe(15);
  });

  it('converts the log’s time unit to the rate constants’ unit', () => {
    const inSeconds = excursionImpact({ ...base, held: [{ temperatureC: 400, duration: 7200 }] });
    const inHours = excursionImpact({
      ...base,
      logTimeUnit: 'h',
      held: [{ temperatureC: 400, duration: 2 }],
    });
    expect(
      relative(inHours.equivalentDuration.estimate * 3600, inSeconds.equivalentDuration.estimate),
    ).toBeLessThan(SAME_COMPUTATION);
    expect(relative(inHours.integratedRate.estimate, inSeconds.integratedRate.estimate)).toBeLessThan(
      SAME_COMPUTATION,
    );
  });

  it('predicts the change by the integrated rate law of the order, and the margin left', () => {
    const held = [{ temperatureC: 450, duration: 30 }];
    const K = excursionImpact({ ...base, held }).integratedRate.estimate;
    // Zero order: ΔC = K; first order: C₀(1 − e^(−K)); second order: C₀ − C₀/(1 + K·C₀)
    // (integrated rate laws, e.g. Atkins' Physical Chemistry, ch. 17, from memory).
    expect(excursionImpact({ ...base, held }).predictedChange?.estimate).toBe(K);
    const first = excursionImpact({ ...base, order: 1, held, latestValue: 98, limit: 95 });
    expect(first.predictedChange?.estimate).toBeCloseTo(98 * (1 - Math.exp(-K)), 12);
    expect(first.margin?.before).toBe(3);
    expect(first.margin?.after.estimate).toBeCloseTo(3 - 98 * (1 - Math.exp(-K)), 12);
    // The margin's interval runs the other way from the change's.
    expect(first.margin!.after.interval![0]).toBeLessThan(first.margin!.after.interval![1]);
    const second = excursionImpact({ ...base, order: 2, held, latestValue: 98 });
    expect(second.predictedChange?.estimate).toBeCloseTo(98 - 98 / (1 + K * 98), 12);
    const percent = excursionImpact({ ...base, order: 1, held });
    expect(percent.predictedChange).toBeNull();
    expect(percent.predictedChangePercent?.estimate).toBeCloseTo(100 * (1 - Math.exp(-K)), 10);
  });

  it('predicts a rising attribute only for zero order, and says why otherwise', () => {
    const held = [{ temperatureC: 450, duration: 30 }];
    const rising = excursionImpact({
      ...base,
      order: 1,
      direction: 'increasing',
      held,
      latestValue: 0.2,
      limit: 0.5,
    });
    expect(rising.predictedChange).toBeNull();
    expect(rising.margin).toBeNull();
    expect(rising.notes.join(' ')).toMatch(/rising attribute/);
    const linear = excursionImpact({ ...base, direction: 'increasing', held, latestValue: 0.2, limit: 0.5 });
    expect(linear.margin?.before).toBeCloseTo(0.3, 12);
  });

  it('flags log temperatures outside the fitted range', () => {
    const impact = excursionImpact({
      ...base,
      held: [
        { temperatureC: 25, duration: 1 },
        { temperatureC: 600, duration: 1 },
      ],
    });
    expect(impact.extrapolation).toEqual({ belowC: 25, aboveC: 600 });
  });

  it('refuses an empty log', () => {
    expect(() => excursionImpact({ ...base, held: [] })).toThrow(/no readings/);
  });
});

describe('excursionImpact agrees with the mean kinetic temperature (Haynes 1971)', () => {
  it('the equivalent time is the covered time × k(MKT)/k(Ts) when MKT uses the fit’s own ΔH/R', async () => {
    // By definition (USP <1160>) the MKT is the constant temperature of equal total degradation;
    // with ΔH/R equal to the fit's −slope, holding the MKT for the covered time must cost exactly
    // the equivalent time. The log: a 4-day sine with a spike and uneven intervals.
    const { assessTemperatureLog } = await import('./temperature-log.ts');
    const readings = Array.from({ length: 300 }, (_, i) => ({
      time: i * 0.5 + (i % 7 === 0 ? 0.1 : 0),
      temperatureC: 320 + 15 * Math.sin(i / 20) + (i > 150 && i < 160 ? 60 : 0),
    }));
    const ratio = -fit.line.slope;
    const assessment = assessTemperatureLog(readings, { activationEnergy: ratio * 8.3144 });
    const impact = excursionImpact({
      ...base,
      logTimeUnit: 'h',
      held: readings.map((r, i) => ({ temperatureC: r.temperatureC, duration: assessment.coverage[i]! })),
    });
    const mktK = assessment.mktC + 273.15;
    const expected = assessment.coveredDuration * Math.exp(-ratio * (1 / mktK - 1 / (300 + 273.15)));
    expect(relative(impact.equivalentDuration.estimate, expected)).toBeLessThan(1e-9);
  });
});
