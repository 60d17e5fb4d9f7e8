import { createHash } from 'node:crypto';
import { readdirSync, readFileSync } from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { NIST_NONLINEAR_HIGHER, NIST_NONLINEAR_LOWER_AVERAGE } from './nist-models.ts';
import { NIST_STRD_DIRECTORY } from './nist-strd-reader.ts';

/** The NIST StRD files the tests and `tests/bench/nist-digits.ts` read (tests/fixtures/nist-strd/README.md). */
const USED = {
  linear: [
    'Filip',
    'Longley',
    'NoInt1',
    'NoInt2',
    'Norris',
    'Pontius',
    'Wampler1',
    'Wampler2',
    'Wampler3',
    'Wampler4',
    'Wampler5',
  ],
  nonlinear: [...NIST_NONLINEAR_LOWER_AVERAGE, ...NIST_NONLINEAR_HIGHER],
  univariate: ['NumAcc1', 'NumAcc2', 'NumAcc3', 'NumAcc4'],
};

interface CertifiedFile {
  file: string;
  file_sha256: string;
  file_bytes: number;
  line_endings: string;
}
const certified = (
  JSON.parse(readFileSync(path.join(NIST_STRD_DIRECTORY, 'certified.json'), 'utf8')) as {
    datasets: Record<string, CertifiedFile>;
  }
).datasets;

// Source: NIST StRD, https://www.itl.nist.gov/div898/strd/; the SHA-256 of each original file was
// recorded in certified.json when it was copied, so any edit (even of a CRLF line ending) shows.
describe('the NIST StRD fixtures are the original files, and exactly the ones used', () => {
  it('holds the used .dat files and no others', () => {
    for (const [category, names] of Object.entries(USED)) {
      const present = readdirSync(path.join(NIST_STRD_DIRECTORY, category)).sort();
      expect(present, category).toEqual(names.map((name) => `${name}.dat`).sort());
    }
  });

  it('every file is byte for byte the original (SHA-256, size and CRLF line endings as recorded)', () => {
    for (const name of Object.values(USED).flat()) {
      const entry = certified[name]!;
      const bytes = readFileSync(path.join(NIST_STRD_DIRECTORY, entry.file));
      expect(createHash('sha256').update(bytes).digest('hex'), name).toBe(entry.file_sha256);
      expect(bytes.length, name).toBe(entry.file_bytes);
      expect(entry.line_endings).toBe('CRLF');
      expect(bytes.includes('\r\n'), name).toBe(true);
    }
  });
});
