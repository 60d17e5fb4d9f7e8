// The `fit` command's output is unchanged, byte for byte, by work on its speed (issue 16): each
// case in tests/fixtures/fit-output-before/cases.json is run and its standard output compared
// with the output stored there before that work (see that folder's README for how it was made).
import { spawnSync } from 'node:child_process';
import { readFileSync } from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';

const root = path.resolve(import.meta.dirname, '..', '..');
const folder = path.join(root, 'tests', 'fixtures', 'fit-output-before');
const TIMEOUT = 60_000;

interface Case {
  name: string;
  file: string;
  args: string[];
}

const cases = JSON.parse(readFileSync(path.join(folder, 'cases.json'), 'utf8')) as Case[];

function runFit(args: string[]) {
  const run = spawnSync(process.execPath, ['scripts/run-cli.mjs', 'fit', ...args], {
    cwd: root,
    encoding: 'utf8',
    maxBuffer: 64 * 1024 * 1024,
  });
  return { status: run.status, stdout: run.stdout, stderr: run.stderr };
}

describe('fit output before and after the speed work', () => {
  it('has cases for JSON and text, with and without shelf life, with a series that cannot be analysed', () => {
    expect(cases.length).toBeGreaterThanOrEqual(5);
    expect(cases.some((entry) => !entry.args.includes('--json'))).toBe(true);
    expect(cases.some((entry) => !entry.args.includes('--lower-limit'))).toBe(true);
    const stored = readFileSync(path.join(folder, 'many-series-full.out'), 'utf8');
    expect(stored).toContain('"verdict": "not analysed:');
    expect(JSON.parse(stored).series.length).toBe(19);
  });

  for (const entry of cases) {
    it(
      `prints the same bytes for ${entry.name}`,
      () => {
        const expected = readFileSync(path.join(folder, `${entry.name}.out`), 'utf8');
        const run = runFit([...entry.args, path.join(folder, entry.file)]);
        expect(run.stderr).toBe('');
        expect(run.status).toBe(0);
        // Compared whole: a difference anywhere, even past the first few hundred kilobytes, fails.
        expect(run.stdout.length).toBe(expected.length);
        expect(run.stdout === expected).toBe(true);
      },
      TIMEOUT,
    );
  }

  it(
    'tells a changed output apart (the comparison is not vacuous)',
    () => {
      const [first] = cases;
      if (!first) throw new Error('no cases');
      const expected = readFileSync(path.join(folder, `${first.name}.out`), 'utf8');
      const changed = runFit([...first.args, '--confidence', '0.9', path.join(folder, first.file)]);
      expect(changed.status).toBe(0);
      expect(changed.stdout === expected).toBe(false);
    },
    TIMEOUT,
  );
});
