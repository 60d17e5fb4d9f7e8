import jStat from 'jstat';
import { describe, expect, it } from 'vitest';
import { extraSumOfSquaresFTest } from './extra-sum-of-squares-f-test.ts';
import { aicc, akaikeWeights } from './information-criteria.ts';

describe('aicc and akaikeWeights (Burnham & Anderson 2002, as in Burnham & Anderson 2002, Model Selection and Multimodel Inference)', () => {
  it('AICc = −2 logL + 2K + 2K(K+1)/(N − K − 1) with K = parameters + 1', () => {
    // Two-parameter law, N = 9, logL = 34.465: K = 3, AICc = −68.93 + 6 + 24/5.
    expect(aicc(34.465, 2, 9)!).toBeCloseTo(-68.93 + 6 + 24 / 5, 10);
    expect(aicc(10, 3, 6)!).toBeCloseTo(-20 + 8 + 40 / 1, 12);
    expect(aicc(10, 3, 5)).toBeNull();
    expect(aicc(10, 2, 4)).toBeNull();
  });

  it('weights are exp(−Δ/2) normalised; null entries stay null (doc example)', () => {
    const weights = akaikeWeights([10, 12, null]);
    expect(weights[0]!).toBeCloseTo(1 / (1 + Math.exp(-1)), 12);
    expect(weights[1]!).toBeCloseTo(Math.exp(-1) / (1 + Math.exp(-1)), 12);
    expect(weights[2]).toBeNull();
    expect(akaikeWeights([null, null])).toEqual([null, null]);
  });
});

describe('extraSumOfSquaresFTest (Motulsky & Christopoulos 2003; p from jStat centralF as reference)', () => {
  it('doc example: RSS 12 on 10 df vs 8 on 9 df gives F = 4.5 and the F(1, 9) upper tail', () => {
    const result = extraSumOfSquaresFTest(12, 10, 8, 9);
    expect(result.f).toBeCloseTo(4.5, 12);
    expect(result.p).toBeCloseTo(1 - jStat.centralF.cdf(4.5, 1, 9), 8);
    expect(result.p).toBeCloseTo(0.0628, 3);
  });

  it('a full fit no better than the reduced gives F = 0, p = 1; an exact full fit gives p = 0', () => {
    expect(extraSumOfSquaresFTest(5, 10, 5, 9).p).toBe(1);
    const exact = extraSumOfSquaresFTest(5, 10, 0, 9);
    expect(exact.p).toBe(0);
    expect(Number.isFinite(exact.f)).toBe(true);
  });
});
