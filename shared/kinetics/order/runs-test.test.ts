import { describe, expect, it } from 'vitest';
import { runsTest } from './runs-test.ts';

/** Independent reference: enumerate every arrangement of N₁ plus and N₂ minus signs and count runs. */
function enumeratedLowerTail(positives: number, negatives: number, observedRuns: number): number {
  const total = positives + negatives;
  let atMost = 0;
  let all = 0;
  for (let mask = 0; mask < 1 << total; mask++) {
    let ones = 0;
    for (let bit = 0; bit < total; bit++) ones += (mask >> bit) & 1;
    if (ones !== positives) continue;
    all++;
    let runs = 1;
    for (let bit = 1; bit < total; bit++) if (((mask >> bit) & 1) !== ((mask >> (bit - 1)) & 1)) runs++;
    if (runs <= observedRuns) atMost++;
  }
  return atMost / all;
}

describe('runsTest (Wald–Wolfowitz; NIST/SEMATECH e-Handbook §1.3.5.13)', () => {
  it('doc example: + + + − − − has 2 runs and p = 2/20 = 0.1', () => {
    const result = runsTest([1, 2, 3, -1, -2, -3]);
    expect(result.runs).toBe(2);
    expect(result.p).toBeCloseTo(0.1, 14);
    expect(result.method).toBe('exact');
  });

  it('exact lower tail equals brute-force enumeration, for every arrangement of N₁ + N₂ ≤ 12 signs tried', () => {
    for (const [positives, negatives] of [
      [3, 4],
      [5, 5],
      [2, 9],
      [6, 6],
    ] as const) {
      const total = positives + negatives;
      for (let mask = 0; mask < 1 << total; mask++) {
        let ones = 0;
        for (let bit = 0; bit < total; bit++) ones += (mask >> bit) & 1;
        if (ones !== positives || mask % 7 !== 0) continue; // every seventh arrangement keeps the test fast
        const signs = Array.from({ length: total }, (_, bit) => (((mask >> bit) & 1) === 1 ? 0.5 : -0.5));
        const result = runsTest(signs);
        expect(result.p).toBeCloseTo(enumeratedLowerTail(positives, negatives, result.runs), 12);
      }
    }
  });

  it('large N uses the normal approximation with mean 2N₁N₂/N + 1 (NIST formula) and gives p ≈ 0.5 at the mean', () => {
    const alternating = Array.from({ length: 1000 }, (_, i) => (i % 2 === 0 ? 1 : -1));
    const result = runsTest(alternating);
    expect(result.method).toBe('normal');
    expect(result.expectedRuns).toBeCloseTo((2 * 500 * 500) / 1000 + 1, 12);
    expect(result.p).toBeGreaterThan(0.999);
    const blocks = Array.from({ length: 1000 }, (_, i) => (i < 500 ? 1 : -1));
    expect(runsTest(blocks).p).toBeLessThan(1e-100);
  });

  it('zero residuals are dropped; fewer than 2 signs of a kind give p = 1', () => {
    expect(runsTest([0, 1, 0, 2, -1]).p).toBe(1);
    expect(runsTest([0, 0, 0]).runs).toBe(0);
  });
});
