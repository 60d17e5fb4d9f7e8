import { describe, expect, it } from 'vitest';
import { invertSmallSymmetric, solveSmallSymmetric } from './small-cholesky.ts';

describe('solveSmallSymmetric / invertSmallSymmetric (Cholesky; Golub & Van Loan §4.2)', () => {
  it('doc example: [[4, 2], [2, 3]]·x = [2, 1] gives x = [0.5, 0] (by hand)', () => {
    const x = new Float64Array(2);
    expect(solveSmallSymmetric(new Float64Array([4, 2, 2, 3]), new Float64Array([2, 1]), x, 2)).toBe(true);
    expect(x[0]).toBeCloseTo(0.5, 14);
    expect(x[1]).toBeCloseTo(0, 14);
  });

  it('A·A⁻¹ = I for a badly scaled 3×3 matrix (entries from 1e-8 to 1e8)', () => {
    const a = new Float64Array([1e8, 3e3, 2, 3e3, 1, 1e-4, 2, 1e-4, 1e-6]);
    const inverse = invertSmallSymmetric(a, 3)!;
    for (let i = 0; i < 3; i++) {
      for (let j = 0; j < 3; j++) {
        let sum = 0;
        for (let k = 0; k < 3; k++) sum += a[i * 3 + k]! * inverse[k * 3 + j]!;
        expect(sum).toBeCloseTo(i === j ? 1 : 0, 8);
      }
    }
  });

  it('a singular or indefinite matrix returns false / null', () => {
    const x = new Float64Array(2);
    expect(solveSmallSymmetric(new Float64Array([1, 1, 1, 1]), new Float64Array([1, 1]), x, 2)).toBe(false);
    expect(solveSmallSymmetric(new Float64Array([1, 2, 2, 1]), new Float64Array([1, 1]), x, 2)).toBe(false);
    expect(invertSmallSymmetric(new Float64Array([0, 0, 0, 1]), 2)).toBeNull();
  });
});
