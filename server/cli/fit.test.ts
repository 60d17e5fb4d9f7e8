// End-to-end tests of `fit`: spawn `node scripts/run-cli.mjs fit` (the bundle `npm run fit` runs,
// dist/cli/fit.cjs, rebuilt when a source is newer) on the invented fixtures in
// tests/fixtures (fictional product "Veltrazine", simulated with Ea = 95 kJ/mol; see its README).
import { spawnSync } from 'node:child_process';
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import ExcelJS from 'exceljs';
import { linearRegression, rSquared } from 'simple-statistics';
import { describe, expect, it } from 'vitest';
import { parseFitArguments } from './fit-arguments.ts';

const root = path.resolve(import.meta.dirname, '..', '..');
const fixture = (name: string) => path.join(root, 'tests', 'fixtures', name);
const scratch = mkdtempSync(path.join(tmpdir(), 'rateledger-fit-'));
const TIMEOUT = 60_000;

function runFit(...args: string[]) {
  const run = spawnSync(process.execPath, ['scripts/run-cli.mjs', 'fit', ...args], {
    cwd: root,
    encoding: 'utf8',
  });
  return { status: run.status, stdout: run.stdout, stderr: run.stderr };
}

// biome-ignore lint/suspicious/noExplicitAny: the JSON document is checked field by field below.
type Json = any;
const STABILITY = ['--time', 'Month', '--value', 'Assay (% label claim)', '--series', 'Batch'];

describe('fit command', () => {
  // Invented: three batches of a fictional product ("Pellorine") over 9 months at 25 °C, losing
  // 0.137 % per month, and one batch at 40 °C; the Q1E estimate at 25 °C is about 34 months.
  const nineMonths = path.join(scratch, 'pellorine-9-months.csv');
  const scatter = [0.12, -0.1, 0.08, -0.06, 0.1];
  writeFileSync(
    nineMonths,
    [
      'Batch,Temperature (°C),Month,Assay (% label claim)',
      ...[100.2, 100.0, 100.4].flatMap((start, batch) =>
        [0, 3, 6, 9].map(
          (month, i) =>
            `PL-250${batch + 1},25,${month},${(start - 0.137 * month + (scatter[(i + batch) % 5] ?? 0)).toFixed(2)}`,
        ),
      ),
      ...[0, 1, 2, 3, 6].map(
        (month, i) => `PL-2501,40,${month},${(100.2 - 0.5 * month + (scatter[(i + 3) % 5] ?? 0)).toFixed(2)}`,
      ),
    ].join('\n'),
  );
  const NINE = [
    ...STABILITY,
    '--temperature',
    'Temperature (°C)',
    '--lower-limit',
    '95',
    '--storage-temperature',
    '25',
  ];

  it(
    'proposes at most 18 months from 9 months of data whose estimate is 34 (ICH Q1E Appendix A, §2.4.1.2.2)',
    () => {
      const run = runFit(
        ...NINE,
        '--storage',
        'room-temperature',
        '--accelerated-temperature',
        '40',
        '--accelerated-change',
        'none',
        '--supporting-data',
        'yes',
        '--json',
        nineMonths,
      );
      expect(run.status).toBe(0);
      const [longTerm, accelerated]: Json[] = JSON.parse(run.stdout).shelfLife;
      expect(longTerm.shelfLife).toBeCloseTo(34, 0);
      // X = 9 months: up to 2X = 18, not more than X + 12 = 21.
      expect(longTerm).toMatchObject({
        role: 'long-term',
        proposedShelfLife: 18,
        proposedReason: null,
        estimateExceedsLimit: true,
        extrapolationLimit: {
          value: 18,
          rule: 'up to 2X, not more than X + 12 months',
          branch: 'room-temperature.statistics-and-supporting-data',
          section: 'ICH Q1E §2.4.1.2.2',
          assumptions: [expect.stringMatching(/^Little or no change and variability not stated/)],
        },
      });
      expect(longTerm.proposedShelfLife).toBeLessThanOrEqual(longTerm.shelfLife);
      // Accelerated conditions propose nothing of their own (ICH Q1E §2.3–2.5).
      expect(accelerated).toMatchObject({ role: 'accelerated', proposedShelfLife: null });
      expect(accelerated.proposedReason).toMatch(/proposed from long-term data only/);
    },
    TIMEOUT,
  );

  it(
    'with nothing stated, takes the most conservative branch and names the assumption in the text',
    () => {
      const json = runFit(...NINE, '--json', nineMonths);
      const [longTerm]: Json[] = JSON.parse(json.stdout).shelfLife;
      expect(longTerm.proposedShelfLife).toBe(9);
      expect(longTerm.extrapolationLimit.branch).toBe('storage-not-stated');
      const text = runFit(...NINE, nineMonths);
      expect(text.stdout).toMatch(/Assumption: Storage category .* not stated: no extrapolation/);
      expect(text.stdout).toMatch(/Proposed shelf life: 9 months/);
      const refused = runFit(...NINE, '--accelerated-change', 'maybe', nineMonths);
      expect(refused.status).toBe(2);
      expect(refused.stderr).toMatch(/--accelerated-change must be none, significant/);
    },
    TIMEOUT,
  );

  it(
    'prints one JSON document with series, models, plots, shelf life and Arrhenius',
    () => {
      const run = runFit(
        ...STABILITY,
        '--temperature',
        'Temperature (°C)',
        '--lower-limit',
        '90',
        '--storage-temperature',
        '25',
        '--json',
        fixture('veltrazine-stability.csv'),
      );
      expect(run.status).toBe(0);
      expect(run.stdout).not.toMatch(/NaN|Infinity/);
      const document: Json = JSON.parse(run.stdout);
      expect(document.series.map((entry: Json) => entry.id)).toEqual([
        'VZ-001 @ 25 °C',
        'VZ-002 @ 25 °C',
        'VZ-003 @ 25 °C',
        'VZ-001 @ 40 °C',
        'VZ-001 @ 50 °C',
        'VZ-001 @ 60 °C',
      ]);
      for (const entry of document.series) {
        expect(entry).toMatchObject({ n: expect.any(Number), verdict: expect.any(String) });
        expect(entry.models.map((model: Json) => model.order)).toEqual([0, 1, 2, 'n']);
        for (const model of entry.models.slice(0, 3)) {
          expect(model).toMatchObject({
            k: expect.any(Number),
            c0: expect.any(Number),
            aicc: expect.any(Number),
            weight: expect.any(Number),
          });
          expect(model.kCi95).toHaveLength(2);
        }
        expect(entry.linearized.map((plot: Json) => plot.order)).toEqual([0, 1, 2]);
        expect(entry).toHaveProperty('halfLife');
        expect(entry).toHaveProperty('t90');
        expect(entry.shelfLife).toHaveProperty('estimate');
      }
      // The ln(value) plot of the 60 °C series against simple-statistics' least-squares line.
      const rows = [
        [0, 99.9],
        [0.5, 88.8],
        [1, 79.5],
        [1.5, 71.5],
        [2, 64.2],
        [3, 50.8],
      ].map(([time, value]) => [time as number, Math.log(value as number)]);
      const reference = linearRegression(rows);
      const plot = document.series[5].linearized[1];
      expect(plot.slope).toBeCloseTo(reference.m, 10);
      expect(plot.intercept).toBeCloseTo(reference.b, 10);
      expect(plot.r2).toBeCloseTo(
        rSquared(rows, (x) => reference.m * x + reference.b),
        10,
      );
      expect(plot.k).toBeCloseTo(-reference.m, 10);
      expect(document.series[5].selectedOrder).toBe(1);
      expect(document.series[5].t90.ci95).toHaveLength(2);
      // Arrhenius: the fixture was simulated with Ea = 95 kJ/mol; its interval must contain it.
      const arrhenius = document.arrhenius;
      expect(arrhenius.order).toBe(1);
      expect(arrhenius.eaCi95[0]).toBeLessThan(95_000);
      expect(arrhenius.eaCi95[1]).toBeGreaterThan(95_000);
      expect(arrhenius.lnA).toEqual(expect.any(Number));
      expect(arrhenius.prediction.temperatureC).toBe(25);
      expect(document.shelfLife.map((condition: Json) => condition.temperatureC)).toEqual([25, 40, 50, 60]);
      expect(document.methodStatement.text).toMatch(/^Data\. 6 series, 38 points used; none excluded\./);
    },
    TIMEOUT,
  );

  it(
    'prints readable tables without --json',
    () => {
      const run = runFit(
        ...STABILITY,
        '--temperature',
        'Temperature (°C)',
        fixture('veltrazine-stability.csv'),
      );
      expect(run.status).toBe(0);
      expect(run.stdout).toContain('Series VZ-001 @ 60 °C (batch VZ-001, 60 °C): 6 points');
      expect(run.stdout).toMatch(/order\s+k\s+95 % CI of k/);
      expect(run.stdout).toMatch(/Ea = [\d.]+ kJ\/mol, CI \[/);
    },
    TIMEOUT,
  );

  it(
    'reads the European export (semicolons, decimal commas, BOM) with the time unit from the option',
    () => {
      const run = runFit(
        '--time',
        'Monat',
        '--value',
        'Gehalt %',
        '--series',
        'Charge',
        '--time-unit',
        'months',
        '--json',
        fixture('veltrazine-long-term-semicolon.csv'),
      );
      expect(run.status).toBe(0);
      const document: Json = JSON.parse(run.stdout);
      expect(document.timeUnit).toBe('month');
      expect(document.series.map((entry: Json) => [entry.id, entry.n])).toEqual([
        ['VZ-003', 7],
        ['VZ-002', 7],
        ['VZ-001', 7],
      ]);
      expect(document.arrhenius).toBeNull();
    },
    TIMEOUT,
  );

  it(
    'names the row and column of every bad cell and exits 2',
    () => {
      const run = runFit(
        '--time',
        'Month',
        '--value',
        'Assay',
        '--series',
        'Batch',
        fixture('veltrazine-bad-cells.csv'),
      );
      expect(run.status).toBe(2);
      expect(run.stdout).toBe('');
      expect(run.stderr).toContain(`fit: 'veltrazine-bad-cells'!C3: "n/a" is not a number`);
      expect(run.stderr).toContain(`fit: 'veltrazine-bad-cells'!B5: no time given for this value`);
    },
    TIMEOUT,
  );

  it(
    'reports a series sampled at one time only and still analyses the others (exit 0)',
    () => {
      const run = runFit(
        '--time',
        'Month',
        '--value',
        'Assay',
        '--series',
        'Batch',
        '--json',
        fixture('veltrazine-single-time.csv'),
      );
      expect(run.status).toBe(0);
      const [single, usable]: Json[] = JSON.parse(run.stdout).series;
      expect(single.error.code).toBe('single-time');
      expect(usable.models[1].k).toEqual(expect.any(Number));
    },
    TIMEOUT,
  );

  it(
    'exits 1 when no series can be analysed (too few points)',
    () => {
      const file = path.join(scratch, 'two-points.csv');
      writeFileSync(file, 'Month,Assay\n0,100.1\n6,98.2\n');
      const run = runFit('--time', 'Month', '--value', 'Assay', '--json', file);
      expect(run.status).toBe(1);
      expect(JSON.parse(run.stdout).series[0].error.code).toBe('too-few-points');
      expect(run.stderr).toContain('no series could be analysed');
    },
    TIMEOUT,
  );

  it(
    'marks the logarithmic laws not applicable for an impurity rising from 0, and gives its Q1E shelf life',
    () => {
      const run = runFit(
        '--time',
        'Month',
        '--value',
        'Impurity B (%)',
        '--upper-limit',
        '0.5',
        '--json',
        fixture('veltrazine-impurity.csv'),
      );
      expect(run.status).toBe(0);
      const [entry]: Json[] = JSON.parse(run.stdout).series;
      expect(entry.linearized[1]).toMatchObject({
        applicable: false,
        reason: expect.stringMatching(/value 0/),
      });
      // Least-squares slope Sxy/Sxx = 1.53/90 = 0.017 (hand computation on the fixture's five points).
      expect(entry.linearized[0].slope).toBeCloseTo(0.017, 10);
      expect(entry.shelfLife.model).toBe('single-batch');
      expect(JSON.parse(run.stdout).shelfLife[0].sidedness).toBe('one-sided');
    },
    TIMEOUT,
  );

  it(
    'reads a workbook sheet chosen by name, and reports a formula without a stored value',
    async () => {
      const workbook = new ExcelJS.Workbook();
      workbook.addWorksheet('Notes').addRow(['Invented data for tests']);
      const sheet = workbook.addWorksheet('Long term');
      sheet.addRow(['Time (weeks)', 'Assay (%)']);
      for (const [week, assay] of [
        [0, 100.2],
        [4, 99.1],
        [8, 98.3],
        [12, 97.0],
        [16, 96.2],
      ])
        sheet.addRow([week, assay]);
      const good = path.join(scratch, 'good.xlsx');
      await workbook.xlsx.writeFile(good);
      const run = runFit(
        '--time',
        'Time (weeks)',
        '--value',
        'Assay (%)',
        '--sheet',
        'Long term',
        '--json',
        good,
      );
      expect(run.status).toBe(0);
      const document: Json = JSON.parse(run.stdout);
      expect(document).toMatchObject({ sheet: 'Long term', timeUnit: 'week', valueUnit: '%' });
      expect(document.series[0].n).toBe(5);

      sheet.getCell('B4').value = { formula: 'B3-0.8' } as ExcelJS.CellFormulaValue;
      const bad = path.join(scratch, 'bad.xlsx');
      await workbook.xlsx.writeFile(bad);
      const failed = runFit(
        '--time',
        'A',
        '--value',
        'B',
        '--time-unit',
        'week',
        '--sheet',
        'Long term',
        bad,
      );
      expect(failed.status).toBe(2);
      expect(failed.stderr).toContain(
        "fit: 'Long term'!B4: formula without a stored value — open and save the workbook in a spreadsheet program, or paste values",
      );
    },
    TIMEOUT,
  );

  it(
    'explains bad options and unreadable files, and prints help',
    () => {
      expect(runFit('--time', 'Month', fixture('veltrazine-stability.csv'))).toMatchObject({
        status: 2,
        stderr: expect.stringContaining('Both --time COL and --value COL are required.'),
      });
      expect(runFit('--time', 'Month', '--value', 'Assay', '--lower-limit', 'ninety', 'x.csv')).toMatchObject(
        {
          status: 2,
          stderr: expect.stringContaining('--lower-limit: "ninety" is not a number.'),
        },
      );
      expect(runFit('--time', 'Month', '--value', 'Assay', path.join(scratch, 'missing.csv'))).toMatchObject({
        status: 2,
        stderr: expect.stringContaining('no such file'),
      });
      const notWorkbook = path.join(scratch, 'fake.xlsx');
      writeFileSync(notWorkbook, '%PDF-1.7\n');
      expect(runFit('--time', 'A', '--value', 'B', notWorkbook)).toMatchObject({
        status: 2,
        stderr: expect.stringContaining('is not an Excel workbook'),
      });
      const help = runFit('--help');
      expect(help.status).toBe(0);
      expect(help.stdout).toContain('Usage: npm run --silent fit -- [options] FILE');
    },
    TIMEOUT,
  );
});

// Issue 12 §6: a negative number is an option's value, not an option; extreme magnitudes give
// the relative results of unit scale (series-scaling.ts) or a clear refusal, never a stack trace.
describe('fit command on bad and extreme input', () => {
  it('reads "--lower-limit -5" (and any negative number) as a number', () => {
    const parsed = parseFitArguments([
      '--time',
      'Month',
      '--value',
      'Change',
      '--lower-limit',
      '-5',
      '--upper-limit',
      '-0,5',
      '--storage-temperature',
      '-20',
      'data.csv',
    ]);
    expect(parsed.ok && 'options' in parsed && parsed.options).toMatchObject({
      lowerLimit: -5,
      upperLimit: -0.5,
      storageTemperature: -20,
      file: 'data.csv',
    });
    const unknown = parseFitArguments(['--time', 'Month', '--value', 'A', '-x', 'data.csv']);
    expect(unknown.ok).toBe(false);
  });

  it(
    'fit --json on values ×1e155 and times ×1e100 gives the unit-scale k and C0 scaled exactly, no stack trace',
    () => {
      // Invented first-order loss (k = 0.08 per month) with 0.4 % scatter.
      const noise = [0.004, -0.003, 0.0035, -0.004, 0.002, -0.0015, 0.003, -0.002, 0.001];
      const months = [0, 1, 2, 3, 6, 9, 12, 18, 24];
      const write = (valueScale: number, timeScale: number) => {
        const file = path.join(scratch, `scaled-${valueScale}-${timeScale}.csv`);
        const rows = months.map(
          (month, i) =>
            `${month * timeScale},${100 * Math.exp(-0.08 * month) * (1 + noise[i]!) * valueScale}`,
        );
        writeFileSync(file, ['Month,Content (mg/mL)', ...rows].join('\n'));
        return file;
      };
      const run = (valueScale: number, timeScale: number) => {
        const result = runFit(
          '--time',
          'Month',
          '--value',
          'Content (mg/mL)',
          '--order',
          '1',
          '--json',
          write(valueScale, timeScale),
        );
        expect(result.stderr).not.toMatch(/\n\s+at /);
        expect(result.status).toBe(0);
        return JSON.parse(result.stdout) as Json;
      };
      const unit = run(1, 1).series[0];
      const scaled = run(1e155, 1e100).series[0];
      expect(scaled.selectedOrder).toBe(1);
      const first = (entry: Json) => entry.models.find((model: Json) => model.order === 1);
      const relative = (a: number, b: number) => Math.abs(a - b) / Math.abs(b);
      // First order: k ×1/s_t, C0 ×s_C (the rate law's own scaling; see series-scaling.ts).
      expect(relative(first(scaled).k, first(unit).k / 1e100)).toBeLessThan(1e-9);
      expect(relative(first(scaled).kCi95[0], first(unit).kCi95[0] / 1e100)).toBeLessThan(1e-9);
      expect(relative(first(scaled).c0, first(unit).c0 * 1e155)).toBeLessThan(1e-9);
    },
    TIMEOUT,
  );
});
