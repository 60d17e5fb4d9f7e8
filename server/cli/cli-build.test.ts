// The command-line bundles (scripts/build-cli.mjs, issue 16): built into a folder of this test's
// own (not dist/cli, which the other tests of server/cli run), self-contained, rebuilt by
// `ensureCliBuild` exactly when a bundle is missing or a file it was built from is newer, and run
// with a V8 code cache (scripts/run-bundle.mjs) that is used only for the text it was made from.
import { spawnSync } from 'node:child_process';
import { existsSync, mkdtempSync, readFileSync, rmSync, statSync, utimesSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import {
  buildCli,
  bundlePath,
  CLI_COMMANDS,
  cliBuildIsStale,
  ensureCliBuild,
} from '../../scripts/build-cli.mjs';
import { cachePath } from '../../scripts/run-bundle.mjs';

const root = path.resolve(import.meta.dirname, '..', '..');
const outdir = mkdtempSync(path.join(tmpdir(), 'rateledger-cli-build-'));
const record = path.join(outdir, 'build.json');
const TIMEOUT = 60_000;

interface BuildRecord {
  builtAt: string;
  inputs: string[];
}
const readRecord = () => JSON.parse(readFileSync(record, 'utf8')) as BuildRecord;
const writeRecord = (value: BuildRecord) => writeFileSync(record, JSON.stringify(value));
const builtAtMs = () => statSync(record).mtimeMs;
/** Sets a file's modification time `offsetMs` from the build record's. */
const dateRelativeToRecord = (file: string, offsetMs: number) => {
  const when = new Date(builtAtMs() + offsetMs);
  utimesSync(file, when, when);
};

beforeAll(() => buildCli(outdir), TIMEOUT);
afterAll(() => rmSync(outdir, { recursive: true, force: true }));

describe('the command-line bundles', () => {
  it('are one file per command, recording every source they were built from', () => {
    for (const command of CLI_COMMANDS) expect(statSync(bundlePath(command, outdir)).size).toBeGreaterThan(0);
    const { inputs } = readRecord();
    expect(inputs).toEqual(
      expect.arrayContaining([
        'package-lock.json',
        'scripts/build-cli.mjs',
        'server/cli/fit.ts',
        'server/cli/mkt.ts',
        'shared/kinetics/analyse-dataset.ts',
        'server/features/intake/readers/read-workbook.ts',
      ]),
    );
    expect(inputs.some((input) => input.startsWith('node_modules/'))).toBe(false);
  });

  it('run outside the project, needing no TypeScript loader and no package for a CSV', () => {
    const run = spawnSync(
      process.execPath,
      [
        bundlePath('fit', outdir),
        '--json',
        ...['--time', 'Month', '--value', 'Assay (% label claim)', '--series', 'Batch'],
        path.join(root, 'tests', 'fixtures', 'veltrazine-stability.csv'),
      ],
      { cwd: outdir, encoding: 'utf8' },
    );
    expect(run.stderr).toBe('');
    expect(run.status).toBe(0);
    expect(JSON.parse(run.stdout).series.length).toBeGreaterThan(0);
    // Unusable options: the same message and exit code as from the TypeScript.
    const refused = spawnSync(process.execPath, [bundlePath('mkt', outdir), '--no-such-option'], {
      cwd: outdir,
      encoding: 'utf8',
    });
    expect(refused.status).toBe(2);
    expect(refused.stderr).toMatch(/^mkt: .*\nmkt: Run with --help for the options\.\n$/);
  });

  // From here on the record lists one input of this test's own, so that other people's edits of
  // the project's sources during the test cannot make the bundles stale.
  const input = path.join(outdir, 'an-input.ts');
  const recordOnlyTheInput = () => {
    writeFileSync(input, '');
    writeRecord({ ...readRecord(), inputs: [input] });
    dateRelativeToRecord(input, -60_000);
  };

  it('are stale when a recorded input is newer than the build, missing, or the record unreadable', () => {
    recordOnlyTheInput();
    expect(cliBuildIsStale(outdir)).toBe(false);
    dateRelativeToRecord(input, 60_000);
    expect(cliBuildIsStale(outdir)).toBe(true);
    rmSync(input);
    expect(cliBuildIsStale(outdir)).toBe(true);
    recordOnlyTheInput();
    writeFileSync(record, '{ not json');
    expect(cliBuildIsStale(outdir)).toBe(true);
    rmSync(record);
    expect(cliBuildIsStale(outdir)).toBe(true);
  });

  it(
    'are rebuilt by ensureCliBuild when one is missing, and left alone when up to date',
    async () => {
      await buildCli(outdir);
      recordOnlyTheInput();
      const bundle = bundlePath('mkt', outdir);
      const before = statSync(bundle).mtimeMs;
      await ensureCliBuild(outdir);
      expect(statSync(bundle).mtimeMs).toBe(before);
      rmSync(bundle);
      expect(cliBuildIsStale(outdir)).toBe(true);
      await ensureCliBuild(outdir);
      expect(statSync(bundle).size).toBeGreaterThan(0);
      expect(readRecord().inputs).toContain('server/cli/mkt.ts');
    },
    TIMEOUT,
  );

  describe('run with the code cache', () => {
    const csv = path.join(root, 'tests', 'fixtures', 'veltrazine-stability.csv');
    const FIT = ['--json', '--time', 'Month', '--value', 'Assay (% label claim)', '--series', 'Batch', csv];
    const runner = path.join(root, 'scripts', 'run-bundle.mjs');
    /** `runBundle(bundle, args)` in a process of its own, as scripts/run-cli.mjs calls it. */
    const runWithCache = (bundle: string, args: string[]) =>
      spawnSync(
        process.execPath,
        [
          '--input-type=module',
          '-e',
          `import { runBundle } from ${JSON.stringify(runner)}; runBundle(process.argv[1], process.argv.slice(2));`,
          bundle,
          ...args,
        ],
        { cwd: outdir, encoding: 'utf8' },
      );
    const direct = (bundle: string, args: string[]) =>
      spawnSync(process.execPath, [bundle, ...args], { cwd: outdir, encoding: 'utf8' });

    it(
      'writes the cache on a first run and reads it on the next, with output and exit codes unchanged',
      async () => {
        await buildCli(outdir);
        const bundle = bundlePath('fit', outdir);
        const cache = cachePath(bundle);
        expect(existsSync(cache)).toBe(false);
        const expected = direct(bundle, FIT);
        expect(expected.status).toBe(0);

        const first = runWithCache(bundle, FIT);
        expect([first.status, first.stdout, first.stderr]).toEqual([0, expected.stdout, '']);
        expect(statSync(cache).size).toBeGreaterThan(1000);
        const written = readFileSync(cache);
        const second = runWithCache(bundle, FIT);
        expect([second.status, second.stdout, second.stderr]).toEqual([0, expected.stdout, '']);
        expect(readFileSync(cache).equals(written)).toBe(true); // accepted, so not written again

        const refusedDirect = direct(bundle, ['--no-such-option']);
        const refused = runWithCache(bundle, ['--no-such-option']);
        expect(refusedDirect.status).toBe(2);
        expect([refused.status, refused.stdout, refused.stderr]).toEqual([
          2,
          refusedDirect.stdout,
          refusedDirect.stderr,
        ]);
      },
      TIMEOUT,
    );

    it(
      'never uses a cache made from another text of the bundle, nor a damaged one: it writes a new one',
      async () => {
        await buildCli(outdir);
        const bundle = bundlePath('fit', outdir);
        const cache = cachePath(bundle);
        expect(runWithCache(bundle, FIT).status).toBe(0);
        const before = readFileSync(cache);
        // The same length of text, another program: a cache V8 would take by length alone.
        const text = readFileSync(bundle, 'utf8');
        const changed = text.replace(
          'no series could be analysed; see the reasons above.',
          'NO SERIES COULD BE ANALYSED; SEE THE REASONS ABOVE.',
        );
        expect(changed.length).toBe(text.length);
        expect(changed).not.toBe(text);
        writeFileSync(bundle, changed);
        const unanalysable = path.join(outdir, 'one-point.csv');
        writeFileSync(unanalysable, 'Batch,Month,Assay (%)\nX-1,0,100\n');
        const run = runWithCache(bundle, [
          '--time',
          'Month',
          '--value',
          'Assay (%)',
          '--series',
          'Batch',
          unanalysable,
        ]);
        expect(run.status).toBe(1);
        expect(run.stderr).toContain('NO SERIES COULD BE ANALYSED');
        const rewritten = readFileSync(cache);
        expect(rewritten.subarray(0, 32).equals(before.subarray(0, 32))).toBe(false);

        // Damaged after its hashes (V8 would run it and crash): it is not used, and replaced.
        const damaged = Buffer.from(rewritten);
        damaged.fill(0x5a, 96, 4096);
        writeFileSync(cache, damaged);
        const again = runWithCache(bundle, FIT);
        expect([again.status, again.stdout]).toEqual([0, direct(bundle, FIT).stdout]);
        expect(readFileSync(cache).equals(damaged)).toBe(false);
      },
      TIMEOUT,
    );
  });
});
