import { describe, expect, it } from 'vitest';
import { inTimeUnit } from './time-unit-words.ts';

// Common practice: a time is printed with its unit (issue 13 §8 saw "at 27.95" without one).
describe('inTimeUnit', () => {
  it('names the dataset unit where the engine says "time units"', () => {
    expect(
      inTimeUnit(
        "The lower one-sided 95 % confidence limit meets the acceptance limit at 27.95 time units (the dataset's unit of time).",
        'month',
      ),
    ).toBe('The lower one-sided 95 % confidence limit meets the acceptance limit at 27.95 months.');
    expect(inTimeUnit('does not meet the acceptance limit within 60 time units.', 'day')).toBe(
      'does not meet the acceptance limit within 60 days.',
    );
  });

  it('keeps a plural or abbreviated unit as given, and the text unchanged without a unit', () => {
    expect(inTimeUnit('at 12 time units', 'weeks')).toBe('at 12 weeks');
    expect(inTimeUnit('at 12 time units', 'h')).toBe('at 12 h');
    expect(inTimeUnit('at 12 time units', '')).toBe('at 12 time units');
  });
});
