import { describe, expect, it } from 'vitest';
import { analyseDataset } from './analyse-dataset.ts';
import {
  applyCensoredRule,
  censoredCount,
  censoredExclusionReason,
  censoredRuleSentence,
} from './censored-values.ts';
import { KineticsError } from './numeric/kinetics-error.ts';
import type { StudyAttribute } from './stability/study-attributes.ts';
import type { Series } from './types.ts';

const IMPURITY: StudyAttribute = {
  name: 'Impurity B',
  unit: '% area',
  direction: 'increasing',
  lowerLimit: null,
  upperLimit: 0.5,
  workingOrder: null,
  workingOrderReason: '',
  censoredRule: 'exclude',
  censoredValue: null,
  massBalanceRole: null,
};

/** Invented: an impurity below the reporting limit at the first two pulls, then rising. */
function impuritySeries(): Series {
  return {
    id: 'Impurity B · B1 @ 25 °C',
    attribute: 'Impurity B',
    batch: 'B1',
    temperatureC: 25,
    timeUnit: 'month',
    valueUnit: '% area',
    observations: [
      { time: 0, value: 0.05, censored: { text: '< 0.05', limit: 0.05 }, source: { cell: 'C2' } },
      { time: 3, value: 0, censored: { text: '<LOQ' }, source: { cell: 'C3' } },
      { time: 6, value: 0.08, source: { cell: 'C4' } },
      { time: 9, value: 0.11, source: { cell: 'C5' } },
      { time: 12, value: 0.15, source: { cell: 'C6' } },
      { time: 18, value: 0.21, source: { cell: 'C7' } },
    ],
  };
}

describe('applyCensoredRule', () => {
  it("'exclude' leaves each censored point out of the fit with the contract's reason and keeps its text", () => {
    const [ruled] = applyCensoredRule([impuritySeries()], IMPURITY);
    expect(ruled!.observations[0]).toEqual({
      time: 0,
      value: 0.05,
      censored: { text: '< 0.05', limit: 0.05 },
      source: { cell: 'C2' },
      excluded: { reason: "reported below the limit (< 0.05): excluded from the fit by the study's rule" },
    });
    expect(ruled!.observations[1]!.excluded).toEqual({ reason: censoredExclusionReason('<LOQ') });
    expect(ruled!.observations.slice(2).every((point) => point.excluded === undefined)).toBe(true);
  });

  it('the engine then fits only the measured points and states each exclusion with its cell', () => {
    const [ruled] = applyCensoredRule([impuritySeries()], IMPURITY);
    const analysis = analyseDataset([ruled!], { upperLimit: 0.5, direction: 'increasing' });
    expect(analysis.series[0]!.analysis!.n).toBe(4);
    expect(analysis.methodStatement.data.excludedPoints.map((point) => point.cell)).toEqual(['C2', 'C3']);
    expect(analysis.methodStatement.text).toContain(
      "Impurity B · B1 @ 25 °C at time 3 (value 0, C3): reported below the limit (<LOQ): excluded from the fit by the study's rule",
    );
  });

  it("'stated-value' fits the censored points at the study's value and keeps their text", () => {
    const stated = { ...IMPURITY, censoredRule: 'stated-value' as const, censoredValue: 0.025 };
    const [ruled] = applyCensoredRule([impuritySeries()], stated);
    expect(ruled!.observations.slice(0, 2)).toEqual([
      { time: 0, value: 0.025, censored: { text: '< 0.05', limit: 0.05 }, source: { cell: 'C2' } },
      { time: 3, value: 0.025, censored: { text: '<LOQ' }, source: { cell: 'C3' } },
    ]);
    const analysis = analyseDataset([ruled!], { upperLimit: 0.5, direction: 'increasing' });
    expect(analysis.series[0]!.analysis!.n).toBe(6);
  });

  it('a point the analyst excluded keeps the analyst’s reason', () => {
    const series = impuritySeries();
    series.observations[1]!.excluded = { reason: 'vial cracked at the 3-month pull' };
    const [ruled] = applyCensoredRule([series], IMPURITY);
    expect(ruled!.observations[1]!.excluded).toEqual({ reason: 'vial cracked at the 3-month pull' });
  });

  it('returns series without censored points as the very same objects, and never changes its input', () => {
    const plain: Series = { ...impuritySeries(), observations: impuritySeries().observations.slice(2) };
    const censored = impuritySeries();
    const before = JSON.stringify(censored);
    const [first, second] = applyCensoredRule([plain, censored], IMPURITY);
    expect(first).toBe(plain);
    expect(second).not.toBe(censored);
    expect(JSON.stringify(censored)).toBe(before);
  });

  it("refuses 'stated-value' without a value, naming the attribute, the series and the point", () => {
    const unstated = { ...IMPURITY, censoredRule: 'stated-value' as const, censoredValue: null };
    expect(() => applyCensoredRule([impuritySeries()], unstated)).toThrow(KineticsError);
    expect(() => applyCensoredRule([impuritySeries()], unstated)).toThrow(
      /^Impurity B: the study fits results below the limit at a stated value but states none \(Impurity B · B1 @ 25 °C at time 0, "< 0.05"\)/,
    );
    // Without a censored point there is nothing to refuse.
    const plain: Series = { ...impuritySeries(), observations: impuritySeries().observations.slice(2) };
    expect(applyCensoredRule([plain], unstated)).toEqual([plain]);
  });
});

describe('censoredRuleSentence', () => {
  it('states the rule and the texts for the method statement, and nothing when no point is censored', () => {
    expect(censoredCount([impuritySeries()])).toBe(2);
    expect(censoredRuleSentence([impuritySeries()], IMPURITY)).toBe(
      'Results below the limit (Impurity B). 2 results reported below a limit ("< 0.05", "<LOQ") were excluded from the fit by the study\'s rule; they are shown with their text.',
    );
    expect(
      censoredRuleSentence([impuritySeries()], {
        ...IMPURITY,
        censoredRule: 'stated-value',
        censoredValue: 0.025,
      }),
    ).toBe(
      'Results below the limit (Impurity B). 2 results reported below a limit ("< 0.05", "<LOQ") were fitted at the value the study states, 0.025 % area; they are shown with their text.',
    );
    const plain: Series = { ...impuritySeries(), observations: impuritySeries().observations.slice(2) };
    expect(censoredRuleSentence([plain], IMPURITY)).toBeNull();
  });
});
