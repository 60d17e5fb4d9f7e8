import { describe, expect, it } from 'vitest';
import { MAX_ATTRIBUTES } from '../../../shared/api/studies.ts';
import { formLocals, regroupedValues } from './study-form-model.ts';

const named = (position: number, name: string): Record<string, string> =>
  position === 1 ? { attribute: name } : { [`attributes[${position}][name]`]: name };

describe('adding and removing attribute groups on the study form', () => {
  it('adds one empty group after the last, keeping the rest, and focuses its name', () => {
    const { values, focus, notice } = regroupedValues(
      { title: 'Kept', ...named(1, 'Assay'), ...named(2, 'Water') },
      { kind: 'add' },
    );
    expect(values).toMatchObject({ title: 'Kept', attribute: 'Assay', 'attributes[2][name]': 'Water' });
    expect(values['attributes[3][name]']).toBe('');
    expect(values['attributes[3][direction]']).toBe('decreasing');
    expect(focus).toBe('attributes[3][name]');
    expect(notice).toMatch(/^Attribute 3 was added/);
  });

  it(`adds nothing past ${MAX_ATTRIBUTES} attributes, and says so`, () => {
    const full = Object.assign(
      {},
      ...Array.from({ length: MAX_ATTRIBUTES }, (_, i) => named(i + 1, `A${i + 1}`)),
    );
    const { values, notice, focus } = regroupedValues(full, { kind: 'add' });
    expect(values).toBe(full);
    expect(notice).toBe(`A study lists at most ${MAX_ATTRIBUTES} attributes: nothing was added.`);
    expect(focus).toBe('notice');
    expect(formLocals(full, {}, '/studies').canAddAttribute).toBe(false);
  });

  it('removes a group and moves the later ones up; the last group cannot go', () => {
    const { values } = regroupedValues(
      { ...named(1, 'Assay'), ...named(2, 'Impurity B'), ...named(3, 'Water') },
      { kind: 'remove', position: 2 },
    );
    expect(values.attribute).toBe('Assay');
    expect(values['attributes[2][name]']).toBe('Water');
    expect(Object.keys(values).some((key) => key.startsWith('attributes[3]'))).toBe(false);
    const single = { ...named(1, 'Assay') };
    expect(regroupedValues(single, { kind: 'remove', position: 1 })).toMatchObject({
      values: single,
      notice: 'A study lists at least one attribute: nothing was removed.',
    });
    expect(formLocals(single, {}, '/studies').attributeGroups[0]!.removable).toBe(false);
  });
});
