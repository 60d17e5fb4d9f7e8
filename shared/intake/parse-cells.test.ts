import { describe, expect, it } from 'vitest';
import { elapsedTime } from './elapsed-time.ts';
import { parseDateCell } from './parse-date-cell.ts';
import { parseNumberCell } from './parse-number-cell.ts';

describe('parseNumberCell', () => {
  it('accepts numbers, decimal points and decimal commas (common practice in European lab exports)', () => {
    expect(parseNumberCell(98.7)).toEqual({ ok: true, value: 98.7 });
    expect(parseNumberCell(' 98.7 ')).toEqual({ ok: true, value: 98.7 });
    expect(parseNumberCell('98,7')).toEqual({ ok: true, value: 98.7 });
    expect(parseNumberCell('-0,5')).toEqual({ ok: true, value: -0.5 });
    expect(parseNumberCell('1,5e-3')).toEqual({ ok: true, value: 0.0015 });
    expect(parseNumberCell(',25')).toEqual({ ok: true, value: 0.25 });
  });

  it('says why other content is not a number', () => {
    expect(parseNumberCell('n/a')).toEqual({ ok: false, blank: false, reason: '"n/a" is not a number' });
    expect(parseNumberCell('<LOQ')).toMatchObject({ ok: false, reason: '"<LOQ" is not a number' });
    expect(parseNumberCell('12.3.4')).toMatchObject({ ok: false });
    expect(parseNumberCell(true)).toMatchObject({ ok: false, reason: 'TRUE is not a number' });
    expect(parseNumberCell(new Date())).toMatchObject({ ok: false, reason: 'is a date, not a number' });
    expect(parseNumberCell(null)).toMatchObject({ ok: false, blank: true });
    expect(parseNumberCell('  ')).toMatchObject({ ok: false, blank: true });
    expect(parseNumberCell(Number.NaN)).toMatchObject({ ok: false, blank: false });
    expect(parseNumberCell({ formulaWithoutValue: 'B2*2' })).toMatchObject({
      ok: false,
      reason: expect.stringMatching(/^formula without a stored value/),
    });
  });
});

describe('parseDateCell', () => {
  it('reads ISO 8601 and dotted day.month.year dates as UTC wall-clock times (ISO 8601-1:2019)', () => {
    expect(parseDateCell('2024-03-15')).toEqual({ ok: true, value: new Date('2024-03-15T00:00:00Z') });
    expect(parseDateCell('2024-03-15 14:30')).toEqual({ ok: true, value: new Date('2024-03-15T14:30:00Z') });
    expect(parseDateCell('2024-03-15T14:30:05')).toEqual({
      ok: true,
      value: new Date('2024-03-15T14:30:05Z'),
    });
    expect(parseDateCell('15.03.2024')).toEqual({ ok: true, value: new Date('2024-03-15T00:00:00Z') });
    const date = new Date('2023-11-02T08:00:00Z');
    expect(parseDateCell(date)).toEqual({ ok: true, value: date });
  });

  it('refuses slash dates and impossible dates with a hint', () => {
    expect(parseDateCell('03/04/2024')).toMatchObject({
      ok: false,
      reason: expect.stringMatching(/slash dates/),
    });
    expect(parseDateCell('2023-02-29')).toMatchObject({
      ok: false,
      reason: expect.stringMatching(/not a valid calendar date/),
    });
    expect(parseDateCell('soon')).toMatchObject({ ok: false, blank: false });
    expect(parseDateCell(null)).toMatchObject({ ok: false, blank: true });
  });
});

describe('elapsedTime', () => {
  it('counts exact durations for s..week (calendar fact: 1 Jan → 1 Mar 2024 is 60 days, 2024 being a leap year)', () => {
    expect(elapsedTime(new Date('2024-01-01'), new Date('2024-03-01'), 'd')).toBe(60);
    expect(elapsedTime(new Date('2024-01-01'), new Date('2024-01-01T12:00:00Z'), 'd')).toBe(0.5);
    expect(elapsedTime(new Date('2024-01-01'), new Date('2024-01-15'), 'week')).toBe(2);
    expect(elapsedTime(new Date('2024-01-01T00:00:00Z'), new Date('2024-01-01T00:01:30Z'), 's')).toBe(90);
  });

  it('counts calendar months for pull points (common practice: 15 Jan → 15 Apr is the 3-month pull)', () => {
    expect(elapsedTime(new Date('2024-01-15'), new Date('2024-04-15'), 'month')).toBe(3);
    expect(elapsedTime(new Date('2023-06-01'), new Date('2025-06-01'), 'month')).toBe(24);
    expect(elapsedTime(new Date('2023-06-01'), new Date('2025-06-01'), 'year')).toBe(2);
    // Half of the 30 days of April 2024 past the 1-month point.
    expect(elapsedTime(new Date('2024-03-01'), new Date('2024-04-16'), 'month')).toBe(1.5);
    // The month after 31 January ends on the last day of February.
    expect(elapsedTime(new Date('2024-01-31'), new Date('2024-02-29'), 'month')).toBe(1);
  });

  it('refuses an end before the start', () => {
    expect(() => elapsedTime(new Date('2024-02-01'), new Date('2024-01-01'), 'd')).toThrow(RangeError);
    expect(() => elapsedTime(new Date('nope'), new Date('2024-01-01'), 'd')).toThrow(RangeError);
  });
});
