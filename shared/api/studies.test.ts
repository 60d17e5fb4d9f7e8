import { describe, expect, it } from 'vitest';
import { fieldErrors, MAX_ATTRIBUTES, STUDY_FIELDS, studyFormSchema } from './studies.ts';

/** The study form as posted: the first attribute in the form's own fields. */
const FIRST = {
  title: 'Veltrazine long-term (invented)',
  product: 'Veltrazine 10 mg tablets (invented)',
  attribute: 'Assay',
  unit: '% of label claim',
  direction: 'decreasing',
  lowerLimit: '95',
  upperLimit: '105',
  workingOrder: '',
  workingOrderReason: '',
  censoredRule: 'exclude',
  censoredValue: '',
  massBalanceRole: 'assay',
  batches: 'VZ-001, VZ-002',
};

/** A further attribute's group as the form posts it, at place `position` in the study. */
function group(position: number, fields: Record<string, string>): Record<string, string> {
  const blank = {
    name: '',
    unit: '',
    direction: 'decreasing',
    lowerLimit: '',
    upperLimit: '',
    workingOrder: '',
    workingOrderReason: '',
    censoredRule: 'exclude',
    censoredValue: '',
    massBalanceRole: '',
  };
  return Object.fromEntries(
    Object.entries({ ...blank, ...fields }).map(([field, value]) => [
      `attributes[${position}][${field}]`,
      value,
    ]),
  );
}

const IMPURITY_B = {
  name: 'Impurity B',
  unit: '% of label claim',
  direction: 'increasing',
  upperLimit: '0,5',
  workingOrder: '1',
  workingOrderReason: 'protocol PL-7 §3 states first-order formation (invented)',
  censoredRule: 'stated-value',
  censoredValue: '0.025',
  massBalanceRole: 'degradant',
};
const WATER = { name: 'Water', unit: '% w/w', direction: 'increasing', upperLimit: '3.0' };

function refusal(input: Record<string, unknown>): Record<string, string> {
  const parsed = studyFormSchema.safeParse(input);
  if (parsed.success) throw new Error('the form was accepted');
  return fieldErrors(parsed.error);
}

describe('the study form lists several attributes', () => {
  it('reads the first attribute from its own fields and each further one from its group, ignoring a blank group', () => {
    const study = studyFormSchema.parse({
      ...FIRST,
      ...group(2, IMPURITY_B),
      ...group(3, WATER),
      ...group(4, {}),
    });
    expect(study).toMatchObject({
      attribute: 'Assay',
      lowerLimit: 95,
      censoredRule: 'exclude',
      censoredValue: null,
      massBalanceRole: 'assay',
    });
    expect(study.additionalAttributes).toEqual([
      {
        name: 'Impurity B',
        unit: '% of label claim',
        direction: 'increasing',
        lowerLimit: null,
        upperLimit: 0.5,
        workingOrder: 1,
        workingOrderReason: 'protocol PL-7 §3 states first-order formation (invented)',
        censoredRule: 'stated-value',
        censoredValue: 0.025,
        massBalanceRole: 'degradant',
      },
      {
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
      },
    ]);
  });

  it('a form of one attribute reads as before: no further attributes, results below the limit excluded, no mass-balance role', () => {
    const { censoredRule, censoredValue, massBalanceRole, ...older } = FIRST;
    const study = studyFormSchema.parse(older);
    expect(study).toMatchObject({
      additionalAttributes: [],
      censoredRule: 'exclude',
      censoredValue: null,
      massBalanceRole: null,
    });
  });

  it('takes a list of attributes given as such (JSON) the same way', () => {
    const study = studyFormSchema.parse({
      ...FIRST,
      additionalAttributes: [{ ...WATER, lowerLimit: '', censoredRule: 'exclude', massBalanceRole: '' }],
    });
    expect(study.additionalAttributes).toEqual([
      expect.objectContaining({ name: 'Water', upperLimit: 3, massBalanceRole: null }),
    ]);
  });

  it('the study versions and the audit trail keep every attribute field', () => {
    expect(STUDY_FIELDS).toEqual(
      expect.arrayContaining(['censoredRule', 'censoredValue', 'massBalanceRole', 'additionalAttributes']),
    );
  });
});

describe('each refusal names its own field', () => {
  const cases: [string, Record<string, string>, string, RegExp][] = [
    ['a missing name', { name: '' }, 'attributes[3][name]', /Attribute is required/],
    ['a missing unit', { unit: ' ' }, 'attributes[3][unit]', /Unit is required/],
    ['an unknown direction', { direction: 'sideways' }, 'attributes[3][direction]', /Choose decreasing/],
    ['no limit', { upperLimit: '' }, 'attributes[3][lowerLimit]', /at least one/],
    ['a limit that is no number', { upperLimit: 'three' }, 'attributes[3][upperLimit]', /must be a number/],
    [
      'a lower limit above the upper',
      { lowerLimit: '4', upperLimit: '3' },
      'attributes[3][upperLimit]',
      /above the lower/,
    ],
    [
      'a working order without a reason',
      { workingOrder: '2' },
      'attributes[3][workingOrderReason]',
      /reason/,
    ],
    [
      'a stated-value rule without its value',
      { censoredRule: 'stated-value' },
      'attributes[3][censoredValue]',
      /Give the value/,
    ],
    [
      'a stated value under the exclude rule',
      { censoredValue: '0.1' },
      'attributes[3][censoredValue]',
      /Leave the stated value blank/,
    ],
    ['an unknown rule', { censoredRule: 'ignore' }, 'attributes[3][censoredRule]', /Choose excluded/],
    [
      'an unknown mass-balance role',
      { massBalanceRole: 'total' },
      'attributes[3][massBalanceRole]',
      /Choose no part/,
    ],
    [
      'a name the study already lists',
      { name: '  impurity b ' },
      'attributes[3][name]',
      /already lists an attribute named “impurity b”/,
    ],
    [
      'a second assay',
      { massBalanceRole: 'assay' },
      'attributes[3][massBalanceRole]',
      /Only one attribute can be the assay/,
    ],
  ];
  it.each(cases)('%s', (_case, change, field, message) => {
    const errors = refusal({ ...FIRST, ...group(2, IMPURITY_B), ...group(3, { ...WATER, ...change }) });
    expect(Object.keys(errors)).toEqual([field]);
    expect(errors[field]).toMatch(message);
  });

  it('the first attribute meets the same rules under its own field names', () => {
    expect(refusal({ ...FIRST, censoredRule: 'stated-value' })).toEqual({
      censoredValue: expect.stringMatching(/Give the value/),
    });
    expect(refusal({ ...FIRST, massBalanceRole: 'everything' })).toEqual({
      massBalanceRole: expect.stringMatching(/Choose no part/),
    });
    expect(refusal({ ...FIRST, ...group(2, { ...WATER, name: 'ASSAY' }) })).toEqual({
      'attributes[2][name]': expect.stringMatching(/already lists an attribute named “ASSAY”/),
    });
  });

  it('every group with an error says so at once, each beside its own field', () => {
    const errors = refusal({
      ...FIRST,
      title: '',
      ...group(2, { ...IMPURITY_B, unit: '' }),
      ...group(3, { ...WATER, lowerLimit: '5' }),
    });
    expect(Object.keys(errors).sort()).toEqual(['attributes[2][unit]', 'attributes[3][upperLimit]', 'title']);
  });

  it(`at most ${MAX_ATTRIBUTES} attributes; blank groups do not count`, () => {
    const groups = (count: number) =>
      Object.assign(
        {},
        ...Array.from({ length: count }, (_, index) =>
          group(index + 2, { ...WATER, name: `Impurity ${index + 1}` }),
        ),
      );
    const full = studyFormSchema.parse({
      ...FIRST,
      ...groups(MAX_ATTRIBUTES - 1),
      ...group(MAX_ATTRIBUTES + 1, {}),
    });
    expect(full.additionalAttributes).toHaveLength(MAX_ATTRIBUTES - 1);
    expect(refusal({ ...FIRST, ...groups(MAX_ATTRIBUTES) })).toEqual({
      attributes: `A study can list at most ${MAX_ATTRIBUTES} attributes: leave the others blank.`,
    });
  });
});
