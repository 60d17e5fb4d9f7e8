import { describe, expect, it } from 'vitest';
import { q1eShelfLife } from './q1e-shelf-life.ts';
import { lineBatch } from './q1e-test-fixtures.ts';
import { scaledQ1eShelfLife } from './scaled-q1e-shelf-life.ts';
import type { StabilityBatch, StabilityTransform } from './stability-batch.ts';

/**
 * Issue 12 §6: values from 1e-300 to 1e300 and times up to 1e300 give the same relative ICH Q1E
 * results as unit scale. The reference is the unscaled evaluation of the same invented batches
 * (ICH Q1E Appendix B: the shelf life is where the one-sided 95 % confidence limit of the mean line
 * meets the acceptance criterion, and that point moves with the data's units: common practice,
 * a change of units changes no conclusion).
 */
const BATCHES: StabilityBatch[] = [
  lineBatch('CV-01', 100.2, -0.21, 0),
  lineBatch('CV-02', 100.0, -0.24, 1),
  lineBatch('CV-03', 100.4, -0.19, 2),
];

function scaled(valueFactor: number, timeFactor: number): StabilityBatch[] {
  return BATCHES.map((batch) => ({
    batch: batch.batch,
    observations: batch.observations.map((observation) => ({
      time: observation.time * timeFactor,
      value: observation.value * valueFactor,
    })),
  }));
}

const relative = (ours: number, reference: number) => Math.abs(ours - reference) / Math.abs(reference);

describe('scaledQ1eShelfLife: the same relative result at every magnitude (issue 12 §6)', () => {
  const cases: [string, number, number][] = [
    ['values ×1e155', 1e155, 1],
    ['values ×1e300', 1e300, 1],
    ['values ×1e-300', 1e-300, 1],
    ['times ×1e300', 1, 1e300],
    ['values ×1e-200, times ×1e100', 1e-200, 1e100],
  ];
  for (const transform of ['none', 'ln'] as StabilityTransform[]) {
    const reference = q1eShelfLife(BATCHES, { lowerLimit: 95, direction: 'decreasing', transform });
    it(`the unit-scale ${transform} evaluation crosses 95 within the horizon (what the comparison rests on)`, () => {
      expect(reference.status).toBe('crossing');
      expect(reference.shelfLife).toBeGreaterThan(12);
      expect(reference.shelfLife).toBeLessThan(40);
    });
    for (const [name, valueFactor, timeFactor] of cases) {
      it(`${transform} scale, ${name}: shelf life, model, p values and line slopes scale exactly`, () => {
        const ours = scaledQ1eShelfLife(scaled(valueFactor, timeFactor), {
          lowerLimit: 95 * valueFactor,
          direction: 'decreasing',
          transform,
        });
        expect(ours.status).toBe(reference.status);
        expect(ours.model).toBe(reference.model);
        expect(ours.limitingLine).toBe(reference.limitingLine);
        expect(relative(ours.shelfLife as number, (reference.shelfLife as number) * timeFactor)).toBeLessThan(
          1e-9,
        );
        expect(relative(ours.horizon, reference.horizon * timeFactor)).toBeLessThan(1e-12);
        expect(ours.lines).toHaveLength(reference.lines.length);
        for (const [index, line] of reference.lines.entries()) {
          expect(
            relative(ours.lines[index]!.shelfLife as number, (line.shelfLife as number) * timeFactor),
          ).toBeLessThan(1e-9);
        }
        expect(ours.poolability!.slopeTest.pValue).toBeCloseTo(reference.poolability!.slopeTest.pValue, 9);
        expect(ours.poolability!.decision).toBe(reference.poolability!.decision);
        // Every sentence quotes the original time, never the internal one.
        expect(ours.reason).toBe(
          timeFactor === 1
            ? reference.reason
            : reference.reason.replaceAll(
                String(Number((reference.shelfLife as number).toPrecision(4))),
                String(Number(((reference.shelfLife as number) * timeFactor).toPrecision(4))),
              ),
        );
      });
    }
  }

  it('leaves data inside 2^-32…2^32 to the plain evaluation (identical object contents)', () => {
    const plain = q1eShelfLife(BATCHES, { lowerLimit: 95, direction: 'decreasing', transform: 'none' });
    const through = scaledQ1eShelfLife(BATCHES, {
      lowerLimit: 95,
      direction: 'decreasing',
      transform: 'none',
    });
    expect(through).toEqual(plain);
  });
});
