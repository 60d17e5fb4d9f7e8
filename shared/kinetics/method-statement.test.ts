import { describe, expect, it } from 'vitest';
import { analyseDataset } from './analyse-dataset.ts';
import { OUTLIER_FAMILY_ALPHA } from './order/bonferroni-outlier-test.ts';
import {
  DECISIVE_ORDER_EVIDENCE,
  MAX_WRONG_ORDER_RATE_PER_CELL,
  MIN_FRACTION_REACTED,
  ORDER_CONSISTENCY_ALPHA,
  SYSTEMATIC_MISFIT_ALPHA,
} from './order/order-decision-thresholds.ts';
import type { Series } from './types.ts';
import { ENGINE_VERSION } from './version.ts';

// N2O5 in CCl4 at 45 °C (Eyring & Daniels 1930; docs/methods.md#worked-examples), one point excluded.
const series: Series = {
  id: 'N2O5',
  timeUnit: 's',
  valueUnit: 'mol/L',
  observations: [
    [0, 2.33],
    [184, 2.08],
    [319, 1.91],
    [526, 1.67],
    [867, 1.36],
    [1198, 1.11],
    [1877, 0.72],
    [2315, 0.55],
    [3144, 0.34],
  ].map(([time, value], index) => ({
    time: time as number,
    value: value as number,
    source: { row: index + 2, cell: `Sheet1!B${index + 2}` },
    ...(index === 3 ? { excluded: { reason: 'vial cracked before analysis' } } : {}),
  })),
};

describe('methodStatement', () => {
  it('lists the data used and every exclusion with its reason and cell', () => {
    const statement = analyseDataset([series]).methodStatement;
    expect(statement.data.pointsUsed).toBe(8);
    expect(statement.data.excludedPoints).toEqual([
      { seriesId: 'N2O5', time: 526, value: 1.67, reason: 'vial cracked before analysis', cell: 'Sheet1!B5' },
    ]);
    expect(statement.text).toMatch(
      /^Data\. 1 series, 8 points used; 1 excluded: N2O5 at time 526 \(value 1\.67, Sheet1!B5\): vial cracked before analysis\./,
    );
  });

  it('quotes the engine thresholds and version, so the text cannot drift from the code', () => {
    const statement = analyseDataset([series]).methodStatement;
    expect(statement.engineVersion).toBe(ENGINE_VERSION);
    expect(statement.orderSelection.thresholds).toMatchObject({
      minFractionReacted: MIN_FRACTION_REACTED,
      decisiveOrderEvidence: DECISIVE_ORDER_EVIDENCE,
      orderConsistencyAlpha: ORDER_CONSISTENCY_ALPHA,
    });
    expect(statement.orderSelection.rule).toContain(`is at least ${DECISIVE_ORDER_EVIDENCE}`);
    expect(statement.orderSelection.rule).toContain(
      `at least ${MIN_FRACTION_REACTED * 100} % of the initial value has reacted`,
    );
    expect(statement.orderSelection.rule).toContain(
      `does not reject it at ${ORDER_CONSISTENCY_ALPHA}, and the runs test on its residuals does not reject at ${SYSTEMATIC_MISFIT_ALPHA}`,
    );
    expect(statement.orderSelection.rule).toContain(
      `a wrong order is named in at most ${MAX_WRONG_ORDER_RATE_PER_CELL * 100} % of series in every combination of fraction reacted and noise`,
    );
    expect(statement.orderSelection.thresholds.outlierFamilyAlpha).toBe(OUTLIER_FAMILY_ALPHA);
    expect(statement.intervals).toContain(
      `Bonferroni-corrected two-sided t quantile t(1 − ${OUTLIER_FAMILY_ALPHA}/(2N); N − p − 1), for N points and p fitted parameters, are flagged as possible outliers (family-wise level ${OUTLIER_FAMILY_ALPHA * 100} % per series)`,
    );
    expect(statement.text).toContain(`Rateledger kinetics engine ${ENGINE_VERSION}.`);
    expect(statement.text).toContain('Two-sided 95 % intervals');
    expect(statement.temperature).toBeNull();
    expect(statement.shelfLife).toBeNull();
  });

  it('states an analyst-fixed order, the error model used, the confidence level and the Q1E rule', () => {
    const statement = analyseDataset([series], {
      order: 1,
      errorModel: 'proportional',
      confidenceLevel: 0.9,
      lowerLimit: 0.5,
    }).methodStatement;
    expect(statement.orderSelection.source).toBe('analyst');
    expect(statement.orderSelection.rule).toMatch(/^Fixed by the analyst at first order/);
    expect(statement.errorModel).toMatchObject({
      requested: 'proportional',
      perSeries: [{ id: 'N2O5', errorModel: 'proportional' }],
    });
    expect(statement.text).toContain('Two-sided 90 % intervals');
    // ICH Q1E App. B.2 / Q1A(R2) 2.2.9: poolability at significance 0.25 (docs/methods.md#batch-poolability).
    expect(statement.shelfLife).toContain('significance 0.25');
    expect(statement.shelfLife).toContain('regressed on ln(value) (the analyst fixed first order)');
  });

  it('states the Q1E declaration, the branch and every assumption of the proposal (ICH Q1E §2.2, Appendix A)', () => {
    // Invented long-term data: three batches over 9 months at 25 °C, a slow linear loss.
    const batches: Series[] = [100.2, 100.0, 100.4].map((start, index) => ({
      id: `PL-250${index + 1}`,
      batch: `PL-250${index + 1}`,
      temperatureC: 25,
      timeUnit: 'month',
      valueUnit: '% of label claim',
      observations: [0, 3, 6, 9].map((time, i) => ({
        time,
        value: start - 0.137 * time + [0.1, -0.1, 0.05, -0.05][(i + index) % 4]!,
      })),
    }));
    const unstated = analyseDataset(batches, { lowerLimit: 95, storageTemperatureC: 25 }).methodStatement;
    expect(unstated.shelfLifeProposal).toContain(
      'Declared by the study: storage not stated; long-term 25 °C',
    );
    expect(unstated.shelfLifeProposal).toMatch(
      /Assumptions: Storage category .* not stated: no extrapolation/,
    );
    expect(unstated.text).toContain('Shelf-life proposal. ');
    expect(unstated.references).toContain(
      'ICH Q1E Evaluation of Stability Data (2003), §2.3–2.5 and Appendix A (extrapolation)',
    );
    const stated = analyseDataset(batches, {
      lowerLimit: 95,
      storageTemperatureC: 25,
      q1e: { storage: 'room-temperature', acceleratedChange: 'none', supportingData: 'yes' },
    }).methodStatement;
    expect(stated.shelfLifeProposal).toMatch(/Proposed: 18 months, the allowance rounded down/);
    expect(stated.shelfLifeProposal).toContain('(ICH Q1E §2.4.1.2.2)');
    expect(stated.shelfLifeProposal).toContain('Assumptions: Little or no change and variability not stated');
  });
});
