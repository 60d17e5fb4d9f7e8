import { describe, expect, it } from 'vitest';
import { fiellerRatioInterval } from './fieller-ratio-interval.ts';

/**
 * Independent reference: the Fieller set {θ : (a − θb)² ≤ q²(Vaa − 2θVab + θ²Vbb)} found by bisection on
 * each side of a/b (E. C. Fieller, J. R. Stat. Soc. B 16 (1954) 175–185).
 */
function bisectedLimits(
  a: number,
  b: number,
  vaa: number,
  vbb: number,
  vab: number,
  q: number,
): [number, number] {
  const inside = (theta: number) =>
    (a - theta * b) ** 2 <= q * q * (vaa - 2 * theta * vab + theta * theta * vbb);
  const centre = a / b;
  const edge = (direction: number) => {
    let near = centre;
    let far = centre + direction * Math.abs(centre);
    while (inside(far)) far += direction * Math.abs(centre);
    for (let i = 0; i < 200; i++) {
      const middle = (near + far) / 2;
      if (inside(middle)) near = middle;
      else far = middle;
    }
    return near;
  };
  return [edge(-1), edge(1)];
}

describe('fiellerRatioInterval (Fieller 1940/1954; Fieller 1954, J. R. Stat. Soc. B 16:175)', () => {
  it('doc example: a = 10 exact, b = 2 ± 0.1, q = 2 gives the endpoint transform [10/2.2, 10/1.8]', () => {
    const result = fiellerRatioInterval(10, 2, 0, 0.01, 0, 2);
    expect(result.estimate).toBe(5);
    expect(result.lower!).toBeCloseTo(10 / 2.2, 12);
    expect(result.upper!).toBeCloseTo(10 / 1.8, 12);
  });

  it('matches the bisected Fieller set with correlated numerator and denominator', () => {
    for (const [a, b, vaa, vbb, vab, q] of [
      [5, 0.8, 0.04, 0.01, 0.012, 2.306],
      [100, 3, 1, 0.2, -0.3, 2.0],
      [-2, -0.5, 0.01, 0.004, 0.001, 1.96],
    ] as const) {
      const result = fiellerRatioInterval(a, b, vaa, vbb, vab, q);
      const [low, high] = bisectedLimits(a, b, vaa, vbb, vab, q);
      expect(result.bounded).toBe(true);
      expect(result.lower!).toBeCloseTo(low, 8);
      expect(result.upper!).toBeCloseTo(high, 8);
    }
  });

  it('is at least as wide as the delta-method interval (metricgate Fieller notes, Fieller 1954, J. R. Stat. Soc. B 16:175)', () => {
    const [a, b, vaa, vbb, vab, q] = [5, 0.8, 0.04, 0.01, 0.012, 2.306];
    const theta = a / b;
    const deltaHalf = (q * Math.sqrt(vaa - 2 * theta * vab + theta * theta * vbb)) / Math.abs(b);
    const result = fiellerRatioInterval(a, b, vaa, vbb, vab, q);
    expect(result.upper! - result.lower!).toBeGreaterThanOrEqual(2 * deltaHalf);
  });

  it('a denominator not significantly different from zero gives an unbounded interval, never a huge number', () => {
    const result = fiellerRatioInterval(10, 0.1, 0.01, 0.01, 0, 2);
    expect(result.bounded).toBe(false);
    expect(result.lower).toBeNull();
    expect(result.upper).toBeNull();
    expect(fiellerRatioInterval(1, 0, 0, 1, 0, 2).estimate).toBeNull();
  });
});
