import { describe, expect, it } from 'vitest';
import { chooseErrorModel, PROPORTIONAL_LOG_LIKELIHOOD_GAIN } from './choose-error-model.ts';
import { fitRateLaw } from './fit-rate-law.ts';
import { linearisedFits } from './linearised-fits.ts';
import { startingValues } from './starting-values.ts';

describe('chooseErrorModel (likelihood ratio on the original scale; Burnham & Anderson 2002, Model Selection and Multimodel Inference)', () => {
  const times = Array.from({ length: 10 }, (_, i) => i);
  const wiggle = [0.02, -0.03, 0.01, 0.04, -0.02, -0.01, 0.03, -0.04, 0.02, -0.01];

  it('constant relative error over two decades chooses proportional; constant absolute error keeps constant', () => {
    const cv = times.map((t, i) => 100 * Math.exp(-0.5 * t) * (1 + wiggle[i]!));
    const sd = times.map((t, i) => 100 * Math.exp(-0.5 * t) + 2 * wiggle[i]! * 25);
    for (const [values, expected] of [
      [cv, 'proportional'],
      [sd, 'constant'],
    ] as const) {
      const start = startingValues(1, linearisedFits(times, values), 100);
      const constant = fitRateLaw(1, times, values, 'constant', start);
      const proportional = values.every((v) => v > 0)
        ? fitRateLaw(1, times, values, 'proportional', start)
        : null;
      const choice = chooseErrorModel(constant, proportional);
      expect(choice.errorModel).toBe(expected);
      if (proportional !== null) {
        const gain = proportional.logLikelihood - constant.logLikelihood;
        expect(gain >= PROPORTIONAL_LOG_LIKELIHOOD_GAIN).toBe(expected === 'proportional');
      }
    }
  });

  it('without a proportional fit the unweighted fit is kept, with the reason', () => {
    const values = times.map((t) => 50 - 2 * t + (t % 2 === 0 ? 0.1 : -0.1));
    const fit = fitRateLaw(0, times, values, 'constant', { initialValue: 50, rateConstant: 2 });
    const choice = chooseErrorModel(fit, null);
    expect(choice.errorModel).toBe('constant');
    expect(choice.reason).toMatch(/not available/);
  });
});
