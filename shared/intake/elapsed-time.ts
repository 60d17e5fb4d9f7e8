/**
 * Elapsed time between two date-times in a chosen unit, with months and years on the calendar.
 *
 * Stability pull points are scheduled in calendar months (common practice): a sample put down on
 * 15 January is the 3-month sample on 15 April, whatever the days in between. So months are
 * counted as whole calendar months from the start, plus the fraction of the next calendar month
 * already gone (the month after 31 January ends on the last day of February). Years are calendar
 * months / 12. Seconds to weeks are exact durations. All dates are read in UTC, which is how
 * spreadsheet readers return a cell's wall-clock date-time.
 *
 * Throws `RangeError` when `end` is before `start` or either date is invalid.
 *
 * Example: `elapsedTime(new Date('2024-01-15'), new Date('2024-04-15'), 'month')` is 3;
 * `elapsedTime(new Date('2024-01-01'), new Date('2024-01-01T12:00Z'), 'd')` is 0.5.
 */
import { SECONDS_PER_TIME_UNIT, type TimeUnit } from '../kinetics/units.ts';

const MILLISECONDS_PER_SECOND = 1000;

/** `start` moved forward by whole calendar months, clamped to the end of a shorter month. */
function addCalendarMonths(start: Date, months: number): number {
  const year = start.getUTCFullYear();
  const month = start.getUTCMonth() + months;
  const lastDay = new Date(Date.UTC(year, month + 1, 0)).getUTCDate();
  const day = Math.min(start.getUTCDate(), lastDay);
  const millisecondsIntoDay = start.getTime() - Date.UTC(year, start.getUTCMonth(), start.getUTCDate());
  return Date.UTC(year, month, day) + millisecondsIntoDay;
}

function calendarMonths(start: Date, end: Date): number {
  let whole =
    (end.getUTCFullYear() - start.getUTCFullYear()) * 12 + (end.getUTCMonth() - start.getUTCMonth());
  while (whole > 0 && addCalendarMonths(start, whole) > end.getTime()) whole -= 1;
  while (addCalendarMonths(start, whole + 1) <= end.getTime()) whole += 1;
  const from = addCalendarMonths(start, whole);
  const to = addCalendarMonths(start, whole + 1);
  return whole + (end.getTime() - from) / (to - from);
}

export function elapsedTime(start: Date, end: Date, unit: TimeUnit): number {
  if (Number.isNaN(start.getTime()) || Number.isNaN(end.getTime())) throw new RangeError('Invalid date.');
  if (end.getTime() < start.getTime()) throw new RangeError('The end date is before the start date.');
  if (unit === 'month') return calendarMonths(start, end);
  if (unit === 'year') return calendarMonths(start, end) / 12;
  return (end.getTime() - start.getTime()) / MILLISECONDS_PER_SECOND / SECONDS_PER_TIME_UNIT[unit];
}
