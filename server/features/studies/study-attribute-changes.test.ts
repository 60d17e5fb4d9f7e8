import { describe, expect, it } from 'vitest';
import type { StudyAttribute } from '../../../shared/kinetics/stability/study-attributes.ts';
import { attributeListChanges, sameStudyValue } from './study-attribute-changes.ts';
import { studyChanges } from './study-versions.ts';

const WATER: StudyAttribute = {
  name: 'Water',
  unit: '% w/w',
  direction: 'increasing',
  lowerLimit: null,
  upperLimit: 3,
  workingOrder: null,
  workingOrderReason: '',
  censoredRule: 'exclude',
  censoredValue: null,
  massBalanceRole: null,
};
const IMPURITY_B: StudyAttribute = {
  ...WATER,
  name: 'Impurity B',
  unit: '% of label claim',
  upperLimit: 0.5,
  massBalanceRole: 'degradant',
};

/** The values a version of a one-attribute study held before migration 0020 added the rest. */
const OLD_VERSION = {
  title: 'Veltrazine long-term (invented)',
  attribute: 'Assay',
  unit: '% of label claim',
  direction: 'decreasing',
  lowerLimit: 95,
  upperLimit: 105,
  workingOrder: null,
  workingOrderReason: '',
  batches: ['VZ-001'],
  notes: '',
};
const NEW_FIELDS = {
  censoredRule: 'exclude',
  censoredValue: null,
  massBalanceRole: null,
  additionalAttributes: [],
};

describe('changes between study versions', () => {
  it('a version recorded before the attribute fields reads them as the defaults: no spurious change', () => {
    expect(studyChanges(OLD_VERSION, { ...OLD_VERSION, ...NEW_FIELDS })).toEqual([]);
    expect(
      studyChanges(OLD_VERSION, { ...OLD_VERSION, ...NEW_FIELDS, notes: 'Pull at 9 months added.' }),
    ).toEqual([{ field: 'notes', label: 'notes', before: 'none', after: 'Pull at 9 months added.' }]);
    // A real change of a new field still shows.
    expect(studyChanges(OLD_VERSION, { ...OLD_VERSION, ...NEW_FIELDS, massBalanceRole: 'assay' })).toEqual([
      { field: 'massBalanceRole', label: 'mass-balance role', before: 'none', after: 'assay' },
    ]);
  });

  it('a further attribute changes field by field, named; the first attribute is named once there are several', () => {
    const before = { ...OLD_VERSION, ...NEW_FIELDS, additionalAttributes: [IMPURITY_B, WATER] };
    const after = {
      ...before,
      lowerLimit: 90,
      additionalAttributes: [IMPURITY_B, { ...WATER, upperLimit: 5 }],
    };
    expect(studyChanges(before, after)).toEqual([
      { field: 'lowerLimit', label: 'Assay: lower limit', before: '95', after: '90' },
      { field: 'additionalAttributes', label: 'Water: upper limit', before: '3', after: '5' },
    ]);
  });

  it('an attribute added or removed reads as such, and a new order as the order', () => {
    expect(attributeListChanges([IMPURITY_B, WATER], [WATER])).toEqual([
      { label: 'attribute removed', before: 'Impurity B (increasing, ≤ 0.5 % of label claim)', after: null },
    ]);
    expect(attributeListChanges([], [WATER])).toEqual([
      { label: 'attribute added', before: null, after: 'Water (increasing, ≤ 3 % w/w)' },
    ]);
    expect(attributeListChanges([IMPURITY_B, WATER], [WATER, IMPURITY_B])).toEqual([
      { label: 'order of the attributes', before: ['Impurity B', 'Water'], after: ['Water', 'Impurity B'] },
    ]);
  });

  it('values compare by content, not by the order of their keys (jsonb reorders them)', () => {
    const reordered = Object.fromEntries(Object.entries(WATER).reverse());
    expect(JSON.stringify(reordered)).not.toBe(JSON.stringify(WATER));
    expect(sameStudyValue([reordered], [WATER])).toBe(true);
    expect(sameStudyValue([{ ...reordered, upperLimit: 4 }], [WATER])).toBe(false);
    expect(attributeListChanges([reordered], [WATER])).toEqual([]);
  });
});
