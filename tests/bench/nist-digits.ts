/**
 * Accuracy bench of the numerical core: `npx tsx tests/bench/nist-digits.ts [--numeric-jacobian]`
 * (also run by `npm run bench`, through `tests/bench/index.ts`).
 *
 * 1. The general Levenberg–Marquardt (`numeric/levenberg-marquardt.ts`) against NIST StRD nonlinear
 *    regression. Prints, per problem and starting point: difficulty, whether the fit converged,
 *    the smallest number of agreeing significant digits over the parameters and over their
 *    standard deviations (digits = −log10(|estimate − certified| / |certified|), capped at 15),
 *    and the iterations. Certified values: NIST StRD,
 *    https://www.itl.nist.gov/div898/strd/nls/nls_main.shtml.
 * 2. The solver the product runs (`order/fit-rate-law.ts`: a streamed Gauss–Newton/Marquardt first
 *    stage whose answer stands when its remaining step is ≤ 1e-11 relative, else finished by the
 *    Levenberg–Marquardt above) against that NIST-checked solver run alone, on every benchmark
 *    series (`numeric/benchmark-series.ts`), per law and error model: the fewest agreeing digits in
 *    the parameters and in their standard errors, how many fits the Levenberg–Marquardt finished,
 *    the series where the fewest digits occur, and how far apart that is in standard errors. The
 *    product's rate-law fits carry the NIST certification only to the smaller of the two digit
 *    counts, which the last line prints.
 *    Outside source: agreement with the NIST-checked solver (see `rate-law-solver-agreement.ts`).
 */
import {
  solverAgreementSeries,
  spectrophotometerRun,
  stabilityProgramme,
} from '../../shared/kinetics/numeric/benchmark-series.ts';
import { levenbergMarquardt } from '../../shared/kinetics/numeric/levenberg-marquardt.ts';
import {
  NIST_NONLINEAR_HIGHER,
  NIST_NONLINEAR_LOWER_AVERAGE,
  nistNonlinearProblem,
} from '../../shared/kinetics/numeric/nist-models.ts';
import { readNistDataset, significantDigits } from '../../shared/kinetics/numeric/nist-strd-reader.ts';
import {
  compareRateLawSolvers,
  type SolverComparison,
  worstAgreement,
} from '../../shared/kinetics/numeric/rate-law-solver-agreement.ts';

const analytic = !process.argv.includes('--numeric-jacobian');
let certifiedParameterDigits = 15;
const rows: string[][] = [
  ['problem', 'difficulty', 'start', 'converged', 'param digits', 'SD digits', 'iterations', 'reason'],
];
for (const name of [...NIST_NONLINEAR_LOWER_AVERAGE, ...NIST_NONLINEAR_HIGHER]) {
  const dataset = readNistDataset(name);
  for (const start of [1, 2] as const) {
    const fit = levenbergMarquardt(nistNonlinearProblem(dataset, start, analytic));
    const parameterDigits = Math.min(
      ...dataset.parameters.map((parameter, j) => significantDigits(fit.parameters[j]!, parameter.estimate)),
    );
    const sdDigits = fit.standardErrors.length
      ? Math.min(
          ...dataset.parameters.map((parameter, j) =>
            significantDigits(fit.standardErrors[j]!, parameter.standardDeviation),
          ),
        )
      : 0;
    if ((NIST_NONLINEAR_LOWER_AVERAGE as readonly string[]).includes(name)) {
      certifiedParameterDigits = Math.min(certifiedParameterDigits, parameterDigits);
    }
    rows.push([
      name,
      dataset.difficulty,
      String(start),
      fit.converged ? 'yes' : 'no',
      parameterDigits.toFixed(1),
      fit.standardErrors.length ? sdDigits.toFixed(1) : '-',
      String(fit.iterations),
      fit.reason,
    ]);
  }
}
console.log(`NIST StRD nonlinear, ${analytic ? 'analytic' : 'central-difference'} Jacobian`);
printTable(rows);

// 2. The product's rate-law solver against the NIST-checked one, on every benchmark series.
const comparisons = [...solverAgreementSeries(), ...stabilityProgramme(), spectrophotometerRun()].flatMap(
  compareRateLawSolvers,
);
const agreementRows: string[][] = [
  [
    'law',
    'error',
    'kind',
    'fits',
    'param digits',
    'SE digits',
    'SEs apart',
    'finished by LM',
    'worst series',
    'product stopped by',
  ],
];
for (const model of [0, 1, 2, 'n'] as const) {
  for (const errorModel of ['constant', 'proportional'] as const) {
    const subset = comparisons.filter((c) => c.model === model && c.errorModel === errorModel);
    for (const kind of [
      'same-minimum',
      'search-limit',
      'different-minimum',
      'fast-failed',
      'reference-failed',
    ] as const) {
      const { count, parameterDigits, standardErrorDigits, worst } = worstAgreement(subset, kind);
      if (count === 0 || worst === null) continue;
      agreementRows.push([
        model === 'n' ? 'free n' : `order ${model}`,
        errorModel,
        kind,
        String(count),
        parameterDigits.toFixed(1),
        standardErrorDigits === null ? '-' : standardErrorDigits.toFixed(1),
        worst.standardErrorsApart.toExponential(1),
        String(subset.filter((c) => c.kind === kind && c.productStage === 'levenberg-marquardt').length),
        worst.seriesId,
        worst.fast?.reason ?? '-',
      ]);
    }
  }
}
console.log(
  `\nfitRateLaw (the product's solver) against the NIST-checked Levenberg–Marquardt: ${comparisons.length} fits`,
);
printTable(agreementRows);
const sameMinimum = worstAgreement(comparisons, 'same-minimum');
const searchLimit = worstAgreement(comparisons, 'search-limit');
const overall = [sameMinimum, searchLimit].reduce((a, b) => (b.parameterDigits < a.parameterDigits ? b : a));
const finishedByLm = comparisons.filter((c) => c.productStage === 'levenberg-marquardt').length;
console.log(
  `${comparisons.length - finishedByLm} fits answered by fitRateLaw's streamed first stage (its remaining` +
    ` Gauss–Newton step ≤ 1e-11 relative), ${finishedByLm} finished by the NIST-checked Levenberg–Marquardt.`,
);
const atNine = comparisons.filter((c) => c.kind === 'same-minimum' && c.parameterDigits >= 9).length;
console.log(
  `Agreement digits (same minimum and search limit): min ${overall.parameterDigits.toFixed(1)} in the parameters` +
    ` (worst: ${describe(overall.worst)}), min ${sameMinimum.standardErrorDigits?.toFixed(1) ?? '-'} in the` +
    ` standard errors; ${atNine} of ${sameMinimum.count} same-minimum fits agree to ≥ 9 digits.`,
);
console.log(
  `Digits of the solver the product runs (fitRateLaw): ${Math.min(overall.parameterDigits, certifiedParameterDigits).toFixed(1)}` +
    ` = min(agreement ${overall.parameterDigits.toFixed(1)}, NIST-checked solver on lower/average NIST StRD ${certifiedParameterDigits.toFixed(1)}).`,
);

function describe(comparison: SolverComparison | null): string {
  if (comparison === null) return '-';
  const law = comparison.model === 'n' ? 'free order' : `order ${comparison.model}`;
  return `${comparison.seriesId}, ${law}, ${comparison.errorModel} error, ${comparison.standardErrorsApart.toExponential(1)} standard errors apart`;
}

function printTable(table: string[][]): void {
  const widths = table[0]!.map((_, column) => Math.max(...table.map((row) => row[column]!.length)));
  for (const row of table) {
    console.log(
      row
        .map((cell, column) => cell.padEnd(widths[column]!))
        .join('  ')
        .trimEnd(),
    );
  }
}
