import { describe, expect, it } from 'vitest';
import type { SheetGrid } from './sheet-grid.ts';
import { temperatureLogFromGrid, temperatureLogMappingSchema } from './temperature-log-from-grid.ts';

const mapping = (extra: Record<string, unknown> = {}) =>
  temperatureLogMappingSchema.parse({ timeColumn: 'A', temperatureColumn: 'B', ...extra });

describe('temperatureLogFromGrid', () => {
  it('detects date-times, measures them in hours from the first reading and skips blank rows', () => {
    const sheet: SheetGrid = {
      name: 'Log',
      rows: [
        ['Recorded at', 'Temperature (°C)'],
        ['2026-07-14 00:00', 21.4],
        [new Date(Date.UTC(2026, 6, 14, 0, 15)), '21,9'],
        [null, ''],
        ['14.07.2026 00:45', 22],
        [null, null],
      ],
    };
    const result = temperatureLogFromGrid([sheet], mapping());
    expect(result).toMatchObject({
      ok: true,
      timeUnit: 'h',
      temperatureUnit: 'C',
      readings: [
        { time: 0, temperatureC: 21.4 },
        { time: 0.25, temperatureC: 21.9 },
        { time: 0.75, temperatureC: 22 },
      ],
      rows: [2, 3, 5],
    });
    expect(result.ok && result.startAt?.toISOString()).toBe('2026-07-14T00:00:00.000Z');
  });

  it('reads kelvin from the header and elapsed times in the header unit', () => {
    const sheet: SheetGrid = {
      name: 'S',
      rows: [
        ['Time (min)', 'Probe (K)'],
        [0, 298.15],
        [30, 299.15],
      ],
    };
    const result = temperatureLogFromGrid([sheet], mapping());
    expect(result).toMatchObject({ ok: true, timeUnit: 'min', startAt: null });
    expect(result.ok && result.readings.map((r) => r.temperatureC)).toEqual([25, 26]);
  });

  it('refuses calendar units for date-times, a missing sheet and a single reading', () => {
    const dated: SheetGrid = {
      name: 'S',
      rows: [
        ['At', 'T'],
        ['2026-01-01', 5],
        ['2026-02-01', 6],
      ],
    };
    const month = temperatureLogFromGrid([dated], mapping({ timeUnit: 'month' }));
    expect(!month.ok && month.problems[0]?.text).toMatch(/fixed units/);
    const missing = temperatureLogFromGrid([dated], mapping({ sheet: 'Other' }));
    expect(!missing.ok && missing.problems[0]?.text).toBe('There is no sheet "Other"; the file has "S".');
    const single = temperatureLogFromGrid(
      [
        {
          name: 'S',
          rows: [
            ['At', 'T'],
            ['2026-01-01', 5],
          ],
        },
      ],
      mapping(),
    );
    expect(!single.ok && single.problems[0]?.text).toMatch(/at least two readings/);
  });

  it('lists at most 50 problems and counts the rest', () => {
    const rows = [['Hour', 'T'], ...Array.from({ length: 80 }, (_, i) => [i, 'n/a'])];
    const result = temperatureLogFromGrid([{ name: 'S', rows }], mapping({ timeUnit: 'h' }));
    expect(!result.ok && result.problems).toHaveLength(51);
    expect(!result.ok && result.problems.at(-1)?.text).toBe('S: and 30 more problems of the same kinds.');
  });
});
