/**
 * Test support (not part of the engine): reads a NIST Statistical Reference Dataset and its
 * certified values from the repository's own copy in `tests/fixtures/nist-strd/` (see the README
 * there for the source and which test uses which file), so a clone with nothing beside it passes.
 *
 * The `.dat` files are NIST's own (CRLF line endings); `certified.json` beside them holds the
 * certified values as the exact strings printed in each file's header and the 1-based line
 * range of the data. Data columns are `y` first, then the predictor(s).
 *
 * Reference: NIST StRD, https://www.itl.nist.gov/div898/strd/.
 */
import { readFileSync } from 'node:fs';
import path from 'node:path';

/** This file sits in `<repository>/shared/kinetics/numeric/`; resolved from it, not from the working directory. */
const repositoryRoot = path.resolve(import.meta.dirname, '..', '..', '..');
/** Where the NIST StRD files are kept: inside the repository, as test fixtures. */
export const NIST_STRD_DIRECTORY = path.join(repositoryRoot, 'tests', 'fixtures', 'nist-strd');

export interface CertifiedParameter {
  name: string;
  estimate: number;
  standardDeviation: number;
  start1?: number;
  start2?: number;
}

export interface NistDataset {
  name: string;
  category: 'linear' | 'nonlinear';
  difficulty: string;
  model: string;
  /** Response values, in file order. */
  y: number[];
  /** Predictor columns, in file order: predictors[0] is x (x1), predictors[1] is x2. */
  predictors: number[][];
  parameters: CertifiedParameter[];
  residualSumOfSquares: number;
  residualStandardDeviation: number;
  degreesOfFreedom: number;
  rSquared?: number;
}

interface CertifiedEntry {
  category: string;
  file: string;
  difficulty: string;
  model: string;
  data_lines: { first: string; last: string };
  parameters: { name: string; estimate: string; std_dev: string; start_1?: string; start_2?: string }[];
  residual_sum_of_squares: string;
  residual_standard_deviation: string;
  degrees_of_freedom: string;
  r_squared?: string;
}

let certifiedCache: Record<string, CertifiedEntry> | undefined;

function certifiedEntries(): Record<string, CertifiedEntry> {
  if (certifiedCache === undefined) {
    const text = readFileSync(path.join(NIST_STRD_DIRECTORY, 'certified.json'), 'utf8');
    certifiedCache = (JSON.parse(text) as { datasets: Record<string, CertifiedEntry> }).datasets;
  }
  return certifiedCache;
}

/** Reads one dataset by its NIST name, e.g. `readNistDataset('Norris')`. */
export function readNistDataset(name: string): NistDataset {
  const entry = certifiedEntries()[name];
  if (entry === undefined) {
    throw new Error(`No NIST StRD dataset named ${name}.`);
  }
  const lines = readFileSync(path.join(NIST_STRD_DIRECTORY, entry.file), 'latin1').split('\n');
  const first = Number(entry.data_lines.first);
  const last = Number(entry.data_lines.last);
  const y: number[] = [];
  const predictors: number[][] = [];
  for (let lineNumber = first; lineNumber <= last; lineNumber++) {
    const fields = (lines[lineNumber - 1] ?? '').trim().split(/\s+/).map(Number);
    if (fields.length < 2 || fields.some((value) => !Number.isFinite(value))) {
      throw new Error(`${name}: line ${lineNumber} is not a data line.`);
    }
    y.push(fields[0]!);
    fields.slice(1).forEach((value, column) => {
      if (predictors[column] === undefined) {
        predictors[column] = [];
      }
      predictors[column]!.push(value);
    });
  }
  return {
    name,
    category: entry.category === 'linear' ? 'linear' : 'nonlinear',
    difficulty: entry.difficulty,
    model: entry.model,
    y,
    predictors,
    parameters: entry.parameters.map((parameter) => ({
      name: parameter.name,
      estimate: Number(parameter.estimate),
      standardDeviation: Number(parameter.std_dev),
      ...(parameter.start_1 === undefined ? {} : { start1: Number(parameter.start_1) }),
      ...(parameter.start_2 === undefined ? {} : { start2: Number(parameter.start_2) }),
    })),
    residualSumOfSquares: Number(entry.residual_sum_of_squares),
    residualStandardDeviation: Number(entry.residual_standard_deviation),
    degreesOfFreedom: Number(entry.degrees_of_freedom),
    ...(entry.r_squared === undefined ? {} : { rSquared: Number(entry.r_squared) }),
  };
}

/**
 * Number of agreeing significant digits, −log10(|estimate − certified| / |certified|), capped
 * at 15 (an exact match). For a certified value of 0 the absolute difference is used.
 */
export function significantDigits(estimate: number, certified: number): number {
  if (!Number.isFinite(estimate)) {
    return 0;
  }
  const difference = Math.abs(estimate - certified);
  if (difference === 0) {
    return 15;
  }
  const relative = certified === 0 ? difference : difference / Math.abs(certified);
  return Math.min(15, Math.max(0, -Math.log10(relative)));
}

/** A NIST univariate dataset: the values and the certified sample mean (as printed). */
export function readNistUnivariate(name: string): { values: number[]; certifiedMean: number } {
  const entry = certifiedEntries()[name] as unknown as {
    file: string;
    data_lines: { first: string; last: string };
    certified: { sample_mean: { value: string } };
  };
  const lines = readFileSync(path.join(NIST_STRD_DIRECTORY, entry.file), 'latin1').split('\n');
  const values: number[] = [];
  for (
    let lineNumber = Number(entry.data_lines.first);
    lineNumber <= Number(entry.data_lines.last);
    lineNumber++
  ) {
    values.push(Number((lines[lineNumber - 1] ?? '').trim()));
  }
  return { values, certifiedMean: Number(entry.certified.sample_mean.value) };
}
