// End-to-end tests of `mkt`: spawn `node scripts/run-cli.mjs mkt` (the bundle `npm run mkt` runs,
// dist/cli/mkt.cjs, rebuilt when a source is newer) on logs written here and on the
// invented store-room log in tests/fixtures (a fictional company's data logger; see its README).
import { spawnSync } from 'node:child_process';
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import ExcelJS from 'exceljs';
import { describe, expect, it } from 'vitest';
import { parseMktArguments } from './mkt-arguments.ts';

const root = path.resolve(import.meta.dirname, '..', '..');
const scratch = mkdtempSync(path.join(tmpdir(), 'rateledger-mkt-'));
const TIMEOUT = 60_000;

function runMkt(...args: string[]) {
  const run = spawnSync(process.execPath, ['scripts/run-cli.mjs', 'mkt', ...args], {
    cwd: root,
    encoding: 'utf8',
  });
  return { status: run.status, stdout: run.stdout, stderr: run.stderr };
}

/**
 * Haynes' formula with equal periods as USP <1160> prints it, written out directly:
 * MKT = (ΔH/R) / −ln[(e^(−ΔH/RT₁) + … + e^(−ΔH/RTₙ))/n], ΔH = 83.144 kJ/mol, R = 8.3144 J/(mol·K).
 */
function uspPlainFormula(temperaturesC: number[], activationEnergy = 83_144): number {
  const c = activationEnergy / 8.3144;
  const mean = temperaturesC.reduce((sum, t) => sum + Math.exp(-c / (t + 273.15)), 0) / temperaturesC.length;
  return c / -Math.log(mean) - 273.15;
}

function writeLog(name: string, lines: string[]): string {
  const file = path.join(scratch, name);
  writeFileSync(file, `${lines.join('\n')}\n`);
  return file;
}

// biome-ignore lint/suspicious/noExplicitAny: the JSON document is checked field by field below.
type Json = any;

describe('mkt command', () => {
  it(
    'prints the USP <1160> mean kinetic temperature of an equally spaced log (plain formula)',
    () => {
      // Twelve monthly means (check value 23.828 °C computed with the USP constants) as a log of
      // elapsed weeks, the unit read from the header.
      const monthly = [18, 19, 21, 23, 25, 27, 29, 28, 26, 23, 20, 18];
      const file = writeLog('monthly.csv', [
        'Week,Temperature (°C)',
        ...monthly.map((t, i) => `${i * 4},${t}`),
      ]);
      const run = runMkt(
        '--json',
        '--time',
        'Week',
        '--time-unit',
        'week',
        '--temperature',
        'Temperature',
        file,
      );
      expect(run.stderr).toBe('');
      expect(run.status).toBe(0);
      const document: Json = JSON.parse(run.stdout);
      expect(document.weighting).toBe('equal');
      expect(document.mktC).toBeCloseTo(23.828, 3);
      expect(Math.abs(document.mktC - uspPlainFormula(monthly))).toBeLessThan(1e-10);
      expect(document.minC).toBe(18);
      expect(document.maxC).toBe(29);
      expect(document.duration).toBe(44);
      expect(document.timeUnit).toBe('week');
      expect(document.startAt).toBeNull();
      expect(document.gaps).toEqual([]);
    },
    TIMEOUT,
  );

  it(
    'finds the store-room excursion and the logger outage, and the warmest 24-hour window',
    () => {
      // Invented log: every 30 min for three days, 21 ± 1.5 °C, a spike to 31.5 °C on 15 July
      // from 14:00 to 16:30, and no readings from 06:30 to 11:00 on 16 July.
      const run = runMkt(
        '--json',
        '--time',
        'Recorded at',
        '--temperature',
        'B',
        '--range-min',
        '15',
        '--range-max',
        '25',
        '--window',
        '24 h',
        'tests/fixtures/temperature-log-store-room.csv',
      );
      expect(run.stderr).toBe('');
      expect(run.status).toBe(0);
      const document: Json = JSON.parse(run.stdout);
      expect(document.readings).toBe(136);
      expect(document.timeUnit).toBe('h');
      expect(document.startAt).toBe('2026-07-14T00:00:00.000Z');
      expect(document.maxC).toBe(31.5);
      expect(document.excursions).toEqual([
        expect.objectContaining({
          side: 'above',
          startAt: '2026-07-15T13:45:00.000Z',
          endAt: '2026-07-15T16:45:00.000Z',
          duration: 3,
          peakC: 31.5,
          peakAt: '2026-07-15T15:30:00.000Z',
          readings: 6,
        }),
      ]);
      expect(document.timeAbove).toBe(3);
      expect(document.timeBelow).toBe(0);
      expect(document.gaps).toEqual([
        expect.objectContaining({
          startAt: '2026-07-16T06:30:00.000Z',
          endAt: '2026-07-16T11:00:00.000Z',
          duration: 4.5,
        }),
      ]);
      // The spike is diluted in the whole log but not in the window that holds it.
      expect(document.warmestWindow.mktC).toBeGreaterThan(document.mktC + 1);
      expect(document.warmestWindow.startAt < '2026-07-15T13:45:00.000Z').toBe(true);
      expect(document.warmestWindow.endAt > '2026-07-15T16:45:00.000Z').toBe(true);
      expect(document.method).toMatch(/USP <1160>/);
    },
    TIMEOUT,
  );

  it(
    'prints a readable summary with the caution when --json is left out',
    () => {
      const run = runMkt(
        '--time',
        'A',
        '--temperature',
        'B',
        '--range-max',
        '25',
        'tests/fixtures/temperature-log-store-room.csv',
      );
      expect(run.status).toBe(0);
      expect(run.stdout).toMatch(/Mean kinetic temperature \(whole log\): 21\.71 °C/);
      expect(run.stdout).toMatch(/above the range from 2026-07-15T13:45:00\.000Z/);
      expect(run.stdout).toMatch(/do not replace, qualified judgement/);
    },
    TIMEOUT,
  );

  it(
    'reads kelvin and a workbook of date-times',
    async () => {
      const workbook = new ExcelJS.Workbook();
      const sheet = workbook.addWorksheet('Logger');
      sheet.addRow(['Time stamp', 'Reading (K)']);
      const kelvin = [278.15, 280.15, 283.15, 279.15];
      for (const [i, k] of kelvin.entries()) sheet.addRow([new Date(Date.UTC(2026, 0, 5, i * 6)), k]);
      const file = path.join(scratch, 'cold-room.xlsx');
      await workbook.xlsx.writeFile(file);
      const run = runMkt(
        '--json',
        '--time',
        'Time stamp',
        '--temperature',
        'Reading',
        '--time-unit',
        'd',
        file,
      );
      expect(run.stderr).toBe('');
      const document: Json = JSON.parse(run.stdout);
      expect(document.sheet).toBe('Logger');
      expect(document.minC).toBeCloseTo(5, 9);
      expect(document.duration).toBeCloseTo(0.75, 12);
      expect(document.mktC).toBeCloseTo(uspPlainFormula(kelvin.map((k) => k - 273.15)), 9);
    },
    TIMEOUT,
  );

  it(
    'names the cell of each unusable value and the row where time goes back, computing nothing',
    () => {
      const file = writeLog('broken.csv', [
        'Hour,Temperature (°C)',
        '0,20.1',
        '1,n/a',
        '2,20.4',
        '1.5,20.2',
        '3,',
      ]);
      const run = runMkt(
        '--json',
        '--time',
        'Hour',
        '--time-unit',
        'h',
        '--temperature',
        'Temperature',
        file,
      );
      expect(run.status).toBe(2);
      expect(run.stdout).toBe('');
      expect(run.stderr).toMatch(/broken!B3: temperature "n\/a" is not a number/);
      expect(run.stderr).toMatch(/broken!A5: this time is not after the one in row 4/);
      expect(run.stderr).toMatch(/broken!B6: temperature is empty/);
    },
    TIMEOUT,
  );

  it(
    'asks for the time unit when neither the header nor the options state it',
    () => {
      const file = writeLog('no-unit.csv', ['Elapsed,Temperature', '0,20', '1,21']);
      const run = runMkt('--time', 'Elapsed', '--temperature', 'Temperature', file);
      expect(run.status).toBe(2);
      expect(run.stderr).toMatch(/the time unit is not stated in the header "Elapsed"/);
    },
    TIMEOUT,
  );

  it('refuses unusable options, naming the option', () => {
    expect(parseMktArguments(['--time', 'A', 'log.csv'])).toEqual({
      ok: false,
      message: 'Both --time COL and --temperature COL are required.',
    });
    const window = parseMktArguments(['--time', 'A', '--temperature', 'B', '--window', 'a month', 'log.csv']);
    expect(window.ok).toBe(false);
    expect(!window.ok && window.message).toMatch(
      /^--window: Write the window as a positive number and a time unit/,
    );
    const range = parseMktArguments([
      '--time',
      'A',
      '--temperature',
      'B',
      '--range-min',
      '25',
      '--range-max',
      '-5',
      'l.csv',
    ]);
    expect(!range.ok && range.message).toMatch(/^--range-max: The lowest labelled temperature must be below/);
    const energy = parseMktArguments([
      '--time',
      'A',
      '--temperature',
      'B',
      '--activation-energy',
      '0',
      'l.csv',
    ]);
    expect(!energy.ok && energy.message).toMatch(/^--activation-energy: ΔH must be a positive number/);
    const parsed = parseMktArguments(['--time', 'A', '--temperature', 'B', '--window', '1,5 d', 'l.csv']);
    expect(parsed.ok && 'options' in parsed && parsed.options.settings.window).toEqual({
      value: 1.5,
      unit: 'd',
    });
  });
});
