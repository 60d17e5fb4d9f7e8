import { describe, expect, it } from 'vitest';
import {
  isKnownTimeZone,
  isoDateTime,
  isoDay,
  mailTime,
  wallClockWithOffset,
  zonedParts,
} from './zoned-time.ts';

// Offsets and summer-time rules from the IANA tz database (tzdata 2025, zones Europe/Berlin,
// Asia/Kolkata, America/St_Johns): Berlin is UTC+01:00 in winter and UTC+02:00 from 01:00 UTC on the
// last Sunday of March (29 March 2026); Kolkata UTC+05:30 all year; St John's UTC−03:30 in winter.
describe('instants on an organisation clock', () => {
  it('gives the wall-clock parts and offset, including half-hour zones and negative offsets', () => {
    expect(zonedParts(new Date('2026-12-01T14:05:00Z'), 'Europe/Berlin')).toEqual({
      date: '2026-12-01',
      time: '15:05:00',
      offset: '+01:00',
    });
    expect(isoDateTime(new Date('2026-01-02T03:04:05Z'), 'Asia/Kolkata')).toBe('2026-01-02T08:34:05+05:30');
    expect(isoDateTime(new Date('2026-01-02T03:04:05Z'), 'America/St_Johns')).toBe(
      '2026-01-01T23:34:05-03:30',
    );
    expect(isoDateTime(new Date('2026-01-02T03:04:05Z'), 'UTC')).toBe('2026-01-02T03:04:05+00:00');
  });
  it('follows the summer-time change (Europe/Berlin, 29 March 2026 at 01:00 UTC)', () => {
    expect(isoDateTime(new Date('2026-03-29T00:59:59Z'), 'Europe/Berlin')).toBe('2026-03-29T01:59:59+01:00');
    expect(isoDateTime(new Date('2026-03-29T01:00:00Z'), 'Europe/Berlin')).toBe('2026-03-29T03:00:00+02:00');
  });
  it('names the calendar day of the zone, not of UTC', () => {
    expect(isoDay(new Date('2026-12-01T23:30:00Z'), 'Asia/Tokyo')).toBe('2026-12-02');
  });
  it('writes the audit-viewer and mail forms with the offset, never an abbreviation', () => {
    const instant = new Date('2025-03-14T10:22:05Z');
    expect(wallClockWithOffset(instant, 'Europe/Berlin')).toBe('2025-03-14 11:22:05 UTC+01:00');
    expect(wallClockWithOffset(instant, 'UTC')).toBe('2025-03-14 10:22:05 UTC');
    expect(mailTime(instant)).toBe('2025-03-14 10:22 UTC');
    expect(mailTime(instant, 'Europe/Berlin')).toBe('2025-03-14 11:22 (UTC+01:00, Europe/Berlin)');
  });
  it('refuses unknown zones and abbreviations', () => {
    expect(isKnownTimeZone('Europe/Kyiv')).toBe(true);
    expect(isKnownTimeZone('EST')).toBe(false);
    expect(isKnownTimeZone('Mars/Olympus_Mons')).toBe(false);
    expect(() => zonedParts(new Date(), 'Mars/Olympus_Mons')).toThrow(RangeError);
  });
});
