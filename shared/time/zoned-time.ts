/**
 * Dates and times in an organisation's IANA time zone: the one place the product sets up
 * `Intl.DateTimeFormat`, so every screen, mail, report and export shows an instant the same way —
 * always with its UTC offset, never with an abbreviation (CST, IST) that names several zones.
 *
 * Formats (ISO 8601:2019 §5.4 for the machine-readable ones):
 * - `isoDateTime`: 2026-12-01T15:05:00+01:00 (reports, signature manifestations, verification)
 * - `isoDay`: 2026-12-01
 * - `wallClockWithOffset`: 2026-12-01 15:05:00 UTC+01:00 (audit viewer; "UTC" alone at offset zero)
 * - `mailTime`: 2026-12-01 15:05 (UTC+01:00, Europe/Berlin), or 2026-12-01 14:05 UTC
 *
 * Each throws `RangeError` for a zone the runtime does not know; check first with `isKnownTimeZone`.
 */

/** IANA time zones this runtime knows; `UTC` is added because some runtimes list only `Etc/UTC`. */
export function knownTimeZones(): string[] {
  const zones = Intl.supportedValuesOf('timeZone');
  return zones.includes('UTC') ? zones : ['UTC', ...zones];
}

/**
 * Whether `zone` is an IANA time zone: one `Intl.supportedValuesOf('timeZone')` lists, or an
 * Area/Location name the runtime resolves to one of those. The list holds the CLDR canonical
 * names, which keep some older spellings (`Asia/Calcutta`, `Europe/Kiev`), so the current IANA
 * names (`Asia/Kolkata`, `Europe/Kyiv`) are accepted through the resolution. Abbreviations such
 * as `EST` are refused: they name no place and no rules for summer time.
 */
export function isKnownTimeZone(zone: string): boolean {
  const zones = knownTimeZones();
  if (zones.includes(zone)) return true;
  if (!/^[A-Za-z]+(?:\/[A-Za-z0-9_+-]+)+$/.test(zone)) return false;
  try {
    return zones.includes(new Intl.DateTimeFormat('en', { timeZone: zone }).resolvedOptions().timeZone);
  } catch {
    return false;
  }
}

/** The parts of an instant on the wall clock of a zone. */
export interface ZonedParts {
  /** YYYY-MM-DD */
  date: string;
  /** hh:mm:ss, 24-hour */
  time: string;
  /** ±hh:mm ("+00:00" at offset zero) */
  offset: string;
}

const formatters = new Map<string, Intl.DateTimeFormat>();

function formatterFor(timeZone: string): Intl.DateTimeFormat {
  let formatter = formatters.get(timeZone);
  if (!formatter) {
    formatter = new Intl.DateTimeFormat('en-GB', {
      timeZone,
      hourCycle: 'h23',
      year: 'numeric',
      month: '2-digit',
      day: '2-digit',
      hour: '2-digit',
      minute: '2-digit',
      second: '2-digit',
      timeZoneName: 'longOffset',
    });
    formatters.set(timeZone, formatter);
  }
  return formatter;
}

/**
 * The wall-clock date, time and UTC offset of `instant` in `timeZone`.
 * Example: zonedParts(new Date('2026-12-01T14:05:00Z'), 'Europe/Berlin') is
 * { date: '2026-12-01', time: '15:05:00', offset: '+01:00' }.
 */
export function zonedParts(instant: Date, timeZone: string): ZonedParts {
  const parts = Object.fromEntries(
    formatterFor(timeZone)
      .formatToParts(instant)
      .map((part) => [part.type, part.value]),
  );
  // longOffset gives "GMT+01:00", or plain "GMT" at offset zero; some runtimes write U+2212 for minus.
  const offset = (String(parts.timeZoneName ?? 'GMT').replace('GMT', '') || '+00:00').replace('−', '-');
  return {
    date: `${parts.year}-${parts.month}-${parts.day}`,
    time: `${parts.hour}:${parts.minute}:${parts.second}`,
    offset,
  };
}

/** ISO 8601 date-time with offset. Example: 2026-12-01T14:05:00Z in Europe/Berlin is "2026-12-01T15:05:00+01:00". */
export function isoDateTime(instant: Date, timeZone: string): string {
  const parts = zonedParts(instant, timeZone);
  return `${parts.date}T${parts.time}${parts.offset}`;
}

/** The calendar day in the zone. Example: 2026-12-01T23:30:00Z in Asia/Tokyo is "2026-12-02". */
export function isoDay(instant: Date, timeZone: string): string {
  return zonedParts(instant, timeZone).date;
}

/**
 * Wall-clock time with its UTC offset, so a reader never has to guess which clock a time is on.
 * Example: 2025-03-14T10:22:05Z in Europe/Berlin is "2025-03-14 11:22:05 UTC+01:00"; in UTC, "… UTC".
 */
export function wallClockWithOffset(instant: Date, timeZone: string): string {
  const parts = zonedParts(instant, timeZone);
  return `${parts.date} ${parts.time} UTC${parts.offset === '+00:00' ? '' : parts.offset}`;
}

/**
 * Minutes precision for mail, naming the zone and its offset: "2026-06-01 14:30 (UTC+02:00,
 * Europe/Berlin)", or "2026-06-01 12:30 UTC" when the zone is UTC.
 */
export function mailTime(instant: Date, timeZone = 'UTC'): string {
  const parts = zonedParts(instant, timeZone);
  const local = `${parts.date} ${parts.time.slice(0, 5)}`;
  if (timeZone === 'UTC' || timeZone === 'Etc/UTC') return `${local} UTC`;
  return `${local} (UTC${parts.offset}, ${timeZone})`;
}
