/**
 * Accuracy bench of the numerical core against NIST StRD nonlinear regression:
 * `npx tsx tests/bench/nist-digits.ts [--numeric-jacobian]`.
 *
 * Prints, per problem and starting point: difficulty, whether the fit converged, the smallest
 * number of agreeing significant digits over the parameters and over their standard deviations
 * (digits = −log10(|estimate − certified| / |certified|), capped at 15), and the iterations.
 * Certified values: NIST StRD, https://www.itl.nist.gov/div898/strd/nls/nls_main.shtml.
 */
import { levenbergMarquardt } from '../../shared/kinetics/numeric/levenberg-marquardt.ts';
import {
  NIST_NONLINEAR_HIGHER,
  NIST_NONLINEAR_LOWER_AVERAGE,
  nistNonlinearProblem,
} from '../../shared/kinetics/numeric/nist-models.ts';
import { readNistDataset, significantDigits } from '../../shared/kinetics/numeric/nist-strd-reader.ts';

const analytic = !process.argv.includes('--numeric-jacobian');
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
const widths = rows[0]!.map((_, column) => Math.max(...rows.map((row) => row[column]!.length)));
console.log(`NIST StRD nonlinear, ${analytic ? 'analytic' : 'central-difference'} Jacobian`);
for (const row of rows) {
  console.log(row.map((cell, column) => cell.padEnd(widths[column]!)).join('  '));
}
