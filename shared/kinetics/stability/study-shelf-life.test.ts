import { describe, expect, it } from 'vitest';
import { analyseDataset } from '../analyse-dataset.ts';
import type { ConditionShelfLife } from '../dataset-analysis.ts';
import type { Series } from '../types.ts';
import type { StudyAttribute } from './study-attributes.ts';
import { type AttributeOutcome, studyShelfLife } from './study-shelf-life.ts';

function attribute(name: string, extra: Partial<StudyAttribute> = {}): StudyAttribute {
  return {
    name,
    unit: '%',
    direction: 'decreasing',
    lowerLimit: 95,
    upperLimit: null,
    workingOrder: null,
    workingOrderReason: '',
    censoredRule: 'exclude',
    censoredValue: null,
    massBalanceRole: null,
    ...extra,
  };
}

/** An attribute whose long-term condition proposes `months` (null: none, with `reason`). */
function proposing(
  name: string,
  months: number | null,
  reason = 'The statistical evaluation failed.',
): AttributeOutcome {
  const longTerm = {
    temperatureC: 25,
    role: 'long-term',
    proposal: {
      proposedShelfLife: months,
      proposedShelfLifeMonths: months,
      proposedReason: months === null ? reason : null,
      statement:
        months === null ? `No shelf life is proposed: ${reason}` : `Proposed shelf life ${months} month.`,
    },
  } as unknown as ConditionShelfLife;
  const accelerated = {
    temperatureC: 40,
    role: 'accelerated',
    proposal: {},
  } as unknown as ConditionShelfLife;
  return {
    attribute: attribute(name),
    analysis: { shelfLife: [accelerated, longTerm] },
    timeUnit: 'month',
    notAnalysedReason: null,
  };
}

describe('studyShelfLife (ICH Q1E Appendix A: each attribute separately, the shortest governs)', () => {
  it('proposes the minimum across attributes and names the limiting attribute', () => {
    const verdict = studyShelfLife([
      proposing('Assay', 24),
      proposing('Impurity B', 18),
      proposing('Water', 36),
    ]);
    expect(verdict.proposedShelfLife).toBe(18);
    expect(verdict.proposedShelfLifeMonths).toBe(18);
    expect(verdict.timeUnit).toBe('month');
    expect(verdict.reason).toBeNull();
    expect(verdict.limitingAttributes).toEqual(['Impurity B']);
    expect(
      verdict.attributes.map((entry) => [entry.attribute.name, entry.proposedShelfLife, entry.limiting]),
    ).toEqual([
      ['Assay', 24, false],
      ['Impurity B', 18, true],
      ['Water', 36, false],
    ]);
    expect(verdict.attributes[1]!.statement).toBe('Proposed shelf life 18 month.');
    expect(verdict.statement).toBe(
      "The study's proposed shelf life is 18 months, set by Impurity B: the earliest of the 3 attributes, each evaluated separately at the long-term condition (ICH Q1E Appendix A). Each attribute: Assay 24 months; Impurity B 18 months (limiting); Water 36 months.",
    );
  });

  it('a tie makes every attribute at the minimum limiting', () => {
    const verdict = studyShelfLife([
      proposing('Assay', 18),
      proposing('Impurity B', 18),
      proposing('Water', 24),
    ]);
    expect(verdict.proposedShelfLifeMonths).toBe(18);
    expect(verdict.limitingAttributes).toEqual(['Assay', 'Impurity B']);
    expect(verdict.attributes.map((entry) => entry.limiting)).toEqual([true, true, false]);
    expect(verdict.statement).toMatch(
      /, set equally by Assay and Impurity B: the earliest of the 3 attributes/,
    );
  });

  it('one attribute without a proposal makes the study propose none, naming it and its reason', () => {
    const verdict = studyShelfLife([
      proposing('Assay', 24),
      proposing('Impurity B', null, 'The confidence limit meets the criterion before the first pull.'),
    ]);
    expect(verdict.proposedShelfLife).toBeNull();
    expect(verdict.proposedShelfLifeMonths).toBeNull();
    expect(verdict.limitingAttributes).toEqual([]);
    expect(verdict.attributes.every((entry) => !entry.limiting)).toBe(true);
    expect(verdict.reason).toBe(
      'Impurity B proposes none: the confidence limit meets the criterion before the first pull.',
    );
    expect(verdict.statement).toMatch(
      /^No shelf life is proposed for the study: Impurity B proposes none: the confidence limit meets the criterion before the first pull\. A product's shelf life cannot be claimed while the shelf life of Impurity B is unknown/,
    );
  });

  it('an attribute with no data or no long-term series proposes none with its own reason', () => {
    const noData: AttributeOutcome = {
      attribute: attribute('Water'),
      analysis: null,
      timeUnit: '',
      notAnalysedReason: 'No data in this dataset.',
    };
    const noLongTerm: AttributeOutcome = {
      ...proposing('Impurity A', 12),
      analysis: { shelfLife: [] },
    };
    const noCriterion: AttributeOutcome = { ...proposing('Colour', 12), analysis: { shelfLife: null } };
    const verdict = studyShelfLife([proposing('Assay', 24), noData, noLongTerm, noCriterion]);
    expect(verdict.proposedShelfLife).toBeNull();
    expect(verdict.attributes.map((entry) => entry.reason)).toEqual([
      null,
      'No data in this dataset.',
      'No series of this attribute is at the long-term condition the study declares (its storage temperature).',
      'No acceptance criterion is set for this attribute.',
    ]);
    expect(verdict.attributes[1]!.statement).toBe(
      'No shelf life is proposed for Water: no data in this dataset.',
    );
    expect(verdict.reason).toMatch(
      /^Water proposes none: no data in this dataset; Impurity A proposes none: no series/,
    );
    expect(verdict.statement).toMatch(/the shelf life of Water, Impurity A and Colour is unknown/);
  });

  it('says the months beside a proposal in another time unit', () => {
    const inDays = { ...proposing('Assay', 12), timeUnit: 'd' };
    (inDays.analysis!.shelfLife![1]!.proposal as { proposedShelfLife: number }).proposedShelfLife = 365.25;
    const verdict = studyShelfLife([inDays]);
    expect(verdict.proposedShelfLife).toBe(365.25);
    expect(verdict.statement).toMatch(
      /^The study's proposed shelf life is 12 months \(365.3 d\), set by Assay/,
    );
  });

  it('a study that lists no attribute proposes none', () => {
    expect(studyShelfLife([])).toMatchObject({
      proposedShelfLife: null,
      reason: 'The study lists no attribute.',
    });
  });
});

describe('studyShelfLife on analyses from the engine', () => {
  // Invented, noise-free straight lines at the long-term condition (25 °C), 0–12 months with 3
  // batches each: the assay falls 0.2 %/month to a lower limit of 95 (crossing near 25 months),
  // the impurity rises 0.025 %/month to an upper limit of 0.3 (mean line crossing at 10 months,
  // its confidence limit earlier). With nothing declared, ICH Q1E gives no extrapolation: each
  // proposes at most X = 12 months, so the assay proposes 12 and the impurity its own estimate.
  const wobble = [0.05, -0.04, 0.03, -0.05, 0.02];
  const times = [0, 3, 6, 9, 12];
  const series = (name: string, start: number, slope: number): Series[] =>
    ['B1', 'B2', 'B3'].map((batch, b) => ({
      id: `${name} · ${batch} @ 25 °C`,
      attribute: name,
      batch,
      temperatureC: 25,
      timeUnit: 'month',
      valueUnit: '%',
      observations: times.map((time, i) => ({
        time,
        value: start + slope * time + (wobble[(i + b) % 5] ?? 0) * (name === 'Assay' ? 1 : 0.01),
      })),
    }));
  const options = { storageTemperatureC: 25, q1e: { longTermTemperatureC: 25 } };

  it('takes each attribute’s own long-term proposal and the earlier one governs', () => {
    const assay = analyseDataset(series('Assay', 100, -0.2), {
      ...options,
      lowerLimit: 95,
      direction: 'decreasing',
    });
    const impurity = analyseDataset(series('Impurity B', 0.05, 0.025), {
      ...options,
      upperLimit: 0.3,
      direction: 'increasing',
    });
    const assayProposal = assay.shelfLife!.find((c) => c.role === 'long-term')!.proposal;
    const impurityProposal = impurity.shelfLife!.find((c) => c.role === 'long-term')!.proposal;
    const verdict = studyShelfLife([
      { attribute: attribute('Assay'), analysis: assay, timeUnit: 'month', notAnalysedReason: null },
      {
        attribute: attribute('Impurity B', { direction: 'increasing', lowerLimit: null, upperLimit: 0.3 }),
        analysis: impurity,
        timeUnit: 'month',
        notAnalysedReason: null,
      },
    ]);
    expect(verdict.attributes.map((entry) => entry.proposedShelfLifeMonths)).toEqual([
      assayProposal.proposedShelfLifeMonths,
      impurityProposal.proposedShelfLifeMonths,
    ]);
    expect(verdict.proposedShelfLifeMonths).toBe(
      Math.min(assayProposal.proposedShelfLifeMonths!, impurityProposal.proposedShelfLifeMonths!),
    );
    // The impurity's statistical estimate (its upper limit) is the earlier one.
    const impurityEstimate = impurity.shelfLife!.find((c) => c.role === 'long-term')!.result!.shelfLife!;
    const assayEstimate = assay.shelfLife!.find((c) => c.role === 'long-term')!.result!.shelfLife!;
    expect(impurityEstimate).toBeLessThan(assayEstimate);
    expect(impurityProposal.proposedShelfLifeMonths).toBeLessThanOrEqual(Math.floor(impurityEstimate));
    expect(verdict.limitingAttributes).toEqual(['Impurity B']);
    expect(verdict.proposedShelfLifeMonths).toBe(Math.floor(impurityEstimate));
    expect(assayProposal.proposedShelfLifeMonths).toBe(12);
  });
});
