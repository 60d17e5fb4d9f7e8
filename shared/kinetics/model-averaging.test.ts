import { describe, expect, it } from 'vitest';
import { analyseSeries } from './analyse-series.ts';
import { modelAverage, plausibleModelIndices } from './model-averaging.ts';
import type { Series } from './types.ts';

describe('modelAverage (Burnham & Anderson 2002 §4.3, eq. 4.1 and eq. 4.9)', () => {
  it('weights the estimates and adds the spread between laws to each law’s variance', () => {
    // Hand calculation (checked with scipy.stats.t.ppf(0.975, 5) = 2.570582): se₁ = 4/(2·2.570582)
    // = 0.7780, se₂ = 6/(2·2.570582) = 1.1671; θ̄ = 0.6·20 + 0.4·30 = 24;
    // se(θ̄) = 0.6·√(0.7780² + 4²) + 0.4·√(1.1671² + 6²) = 4.889958; interval 24 ± 2.570582·4.889958.
    const averaged = modelAverage(
      [
        { model: '1', weight: 0.6, estimate: 20, interval: [18, 22], degreesOfFreedom: 5 },
        { model: '2', weight: 0.4, estimate: 30, interval: [27, 33], degreesOfFreedom: 5 },
      ],
      0.95,
      'linear',
    );
    expect(averaged.estimate).toBeCloseTo(24, 10);
    expect(averaged.unconditionalStandardError).toBeCloseTo(4.889958, 5);
    expect(averaged.interval![0]).toBeCloseTo(11.42996, 4);
    expect(averaged.interval![1]).toBeCloseTo(36.57004, 4);
    expect(averaged.range).toEqual([20, 30]);
    expect(averaged.method).toMatch(/Burnham & Anderson 2002 §4\.3, eq\. 4\.9/);
  });

  it('renormalises the weights over the laws averaged and, on the log scale, gives a weighted geometric mean', () => {
    const averaged = modelAverage(
      [
        { model: '0', weight: 0.2, estimate: 10, interval: [9, 11], degreesOfFreedom: 6 },
        { model: '1', weight: 0.2, estimate: 40, interval: [36, 44], degreesOfFreedom: 6 },
      ],
      0.95,
      'log',
    );
    expect(averaged.laws.map((law) => law.weight)).toEqual([0.5, 0.5]);
    expect(averaged.estimate).toBeCloseTo(20, 10); // √(10·40)
    // The spread between the laws dominates: the interval covers both estimates.
    expect(averaged.interval![0]).toBeLessThan(10);
    expect(averaged.interval![1]).toBeGreaterThan(40);
  });

  it('forms no average when a plausible law lacks an estimate or an interval, and says which', () => {
    const averaged = modelAverage(
      [
        { model: '1', weight: 0.6, estimate: 20, interval: [18, 22], degreesOfFreedom: 5 },
        { model: '2', weight: 0.4, estimate: 30, interval: null, degreesOfFreedom: 5 },
      ],
      0.95,
      'log',
    );
    expect(averaged.estimate).toBeNull();
    expect(averaged.reason).toMatch(/second-order law has no positive estimate with an interval/);
  });
});

describe('plausibleModelIndices (weight ≥ 0.1 or ΔAICc ≤ 2)', () => {
  it('keeps a law on either criterion, the thresholds included, and never one without AICc', () => {
    expect(plausibleModelIndices([10, 12, 12.5, 30, null], [0.5, 0.09, 0.1, 0.0, null])).toEqual([0, 1, 2]);
    expect(plausibleModelIndices([10, 12.01], [0.95, 0.05])).toEqual([0]);
  });
});

// Invented first-order data (C0 = 100, k = 0.004 /month, hand-written noise): ~9 % lost in 24
// months, too little for the engine to name an order (issue 12 §3).
const NOISE = [0.21, -0.34, 0.12, 0.3, -0.18, -0.05, 0.26];
const MONTHS = [0, 3, 6, 9, 12, 18, 24];
const LONG_TERM: Series = {
  id: 'A',
  timeUnit: 'month',
  valueUnit: '%',
  observations: MONTHS.map((time, index) => ({ time, value: 100 * Math.exp(-0.004 * time) + NOISE[index]! })),
};

describe('analyseSeries when the data name no order', () => {
  const analysis = analyseSeries(LONG_TERM, { lowerLimit: 95, predictAt: [36] });

  it('shows each plausible law’s k, t½, t90 and time to the limit, and averages only t90, time to limit and predictions', () => {
    expect(analysis.reportedOrder).toBeNull();
    const plausible = analysis.plausible!;
    expect(plausible.laws.length).toBeGreaterThanOrEqual(2);
    for (const law of plausible.laws) {
      expect(law.k).not.toBeNull();
      expect(law.kCi95).not.toBeNull();
      expect(law.t90?.estimate).toBeGreaterThan(0);
      expect(law.timeToLimit?.lower?.estimate).toBeGreaterThan(0);
      expect((law.weight ?? 0) >= 0.1 || (law.deltaAicc ?? Number.POSITIVE_INFINITY) <= 2).toBe(true);
    }
    const [low, high] = plausible.range.t90!;
    const averaged = plausible.modelAveraged.t90;
    expect(averaged.estimate).toBeGreaterThanOrEqual(low);
    expect(averaged.estimate).toBeLessThanOrEqual(high);
    expect(averaged.interval![0]).toBeLessThan(averaged.estimate!);
    expect(averaged.interval![1]).toBeGreaterThan(averaged.estimate!);
    expect(plausible.modelAveraged.timeToLimit?.lower?.estimate).toBeGreaterThan(0);
    expect(plausible.modelAveraged.predictions?.[0]?.estimate).toBeGreaterThan(80);
    // Never k: no averaged rate constant exists in the result.
    expect(Object.keys(plausible.modelAveraged).sort()).toEqual(['predictions', 't90', 'timeToLimit']);
  });

  it('uses the study’s working order where the data cannot tell, labelled as such', () => {
    const withWorking = analyseSeries(LONG_TERM, {
      workingOrder: { order: 1, reason: 'protocol STB-12 states first order' },
    });
    expect(withWorking.selection.bestIntegerOrder).not.toBeUndefined();
    expect(withWorking.reportedOrder).toBe(1);
    expect(withWorking.orderSource).toBe('study');
    expect(withWorking.workingOrderReason).toBe('protocol STB-12 states first order');
    expect(withWorking.verdict).toMatch(/^Working order from the study: first order \(protocol STB-12/);
    expect(withWorking.verdict).not.toMatch(/chosen/);
    expect(withWorking.t90?.estimate).toBeGreaterThan(0);
  });
});
