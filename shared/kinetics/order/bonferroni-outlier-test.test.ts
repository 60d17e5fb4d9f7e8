import jStat from 'jstat';
import { describe, expect, it } from 'vitest';
import {
  bonferroniOutlierCriticalValue,
  OUTLIER_FAMILY_ALPHA,
  possibleOutlierMessage,
} from './bonferroni-outlier-test.ts';

describe('bonferroniOutlierCriticalValue: t(1 − α/(2N); N − p − 1)', () => {
  it('matches published t-table values', () => {
    // NIST/SEMATECH e-Handbook §1.3.6.7.2, "Critical values of the Student's t distribution" (from memory):
    // 25 points, 2 parameters, α = 0.05 → t(0.999; 22) = 3.505.
    expect(bonferroniOutlierCriticalValue(25, 2, 0.05)!).toBeCloseTo(3.505, 3);
    // Same table: 5 points, 2 parameters, α = 0.05 → t(0.995; 2) = 9.925.
    expect(bonferroniOutlierCriticalValue(5, 2, 0.05)!).toBeCloseTo(9.925, 3);
    // 8 points, 2 parameters, α = 0.04 → t(0.9975; 5) = 4.773 (t table, upper-tail 0.0025 column, from memory:
    // Montgomery & Runger, Applied Statistics and Probability for Engineers, Table V).
    expect(bonferroniOutlierCriticalValue(8, 2, 0.04)!).toBeCloseTo(4.773, 3);
  });

  it('uses α = 4 % per series by default and the jStat quantile at 1 − α/(2N) on N − p − 1 df', () => {
    expect(OUTLIER_FAMILY_ALPHA).toBe(0.04);
    // Reference library: jStat's studentt.inv, the same routine the engine wraps, at the Bonferroni point.
    expect(bonferroniOutlierCriticalValue(12, 2)).toBeCloseTo(jStat.studentt.inv(1 - 0.04 / 24, 9), 12);
    expect(bonferroniOutlierCriticalValue(15, 3)).toBeCloseTo(jStat.studentt.inv(1 - 0.04 / 30, 11), 12);
  });

  it('grows with N so that the chance of any flag in a clean series stays bounded (Bonferroni)', () => {
    const values = [5, 8, 12, 15].map((n) => bonferroniOutlierCriticalValue(n, 2, 0.05)!);
    for (let i = 1; i < values.length; i++) expect(values[i]!).toBeLessThan(values[i - 1]!);
    // On many df the quantile approaches the normal one: z(1 − 0.05/200) = 3.481 (standard normal table, from memory).
    expect(bonferroniOutlierCriticalValue(100, 2, 0.05)!).toBeGreaterThan(3.481);
  });

  it('returns null when no degrees of freedom are left (N − p − 1 < 1)', () => {
    expect(bonferroniOutlierCriticalValue(3, 2)).toBeNull();
    expect(bonferroniOutlierCriticalValue(4, 3)).toBeNull();
    expect(bonferroniOutlierCriticalValue(4, 2)).not.toBeNull();
  });

  it('the warning sentence states the rule, the critical value and the measured rates', () => {
    const message = possibleOutlierMessage(1, 4.7733, '4');
    expect(message).toMatch(
      /^1 point\(s\) have an externally studentised residual beyond ±4\.77 \(times 4\)/,
    );
    expect(message).toContain('Bonferroni-corrected t quantile t(1 − 0.04/(2N); N − p − 1)');
    expect(message).toMatch(/% of clean series get a flag/);
    expect(message).toMatch(/when it is the last pull/);
  });
});
