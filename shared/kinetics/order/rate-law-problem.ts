import type { NonlinearProblem } from '../numeric/levenberg-marquardt.ts';
import type { RateLawModel } from '../types.ts';
import { initialRateLawAt, type PreparedRateLaw, prepareRateLaw, rateLawAt } from './integrated-rate-law.ts';

/**
 * An integrated rate law as a `NonlinearProblem` for the NIST-checked `levenbergMarquardt`, on the
 * fitting scale of its error model: minimise Σ (yᵢ − C(tᵢ))² (constant error) or Σ (ln yᵢ − ln C(tᵢ))²
 * (proportional error), unweighted. Parameters: (C0, k) for orders 0, 1, 2; (C0, r0, n) for the free
 * order, in initial-rate form (r0 = k·C0ⁿ, the initial rate), or (C0, r0) with n held at `fixedOrder`.
 *
 * Why: this is the objective `fitRateLaw` reports on, written once, so that the product's fits and the
 * solver-agreement check (`numeric/rate-law-solver-agreement.ts`) hand the same problem to the same solver.
 * The free order is posed in initial-rate form because in (C0, k, n) k and n trade off almost exactly
 * (what the data fix is k·C0^(n−1)): on a 12-point series at 15 % conversion the minimum in (C0, k, n)
 * is determined in double precision only to about 2.5e-6 of k (two runs of the solver from different
 * starts, measured), while in (C0, r0, n) it is determined to about 1e-12; k = r0·C0^(−n) then carries
 * those digits.
 *
 * Formula in words: the model is C(t) or ln C(t) from `integrated-rate-law.ts` (`rateLawAt` for orders
 * 0–2, `initialRateLawAt` for the free order, which handles n → 1 without loss of digits and the finite
 * end of orders below 1; the zero-order line is 0 past its end); the Jacobian is its analytic gradient,
 * divided by C(t) on the log scale (∂ln C/∂θ = (∂C/∂θ)/C). Infeasible parameters (the law undefined at
 * some time, or C ≤ 0 on the log scale) give a non-finite model value, which the solver treats as a
 * failed step.
 *
 * Reference: integrated laws as in `integrated-rate-law.ts`; least squares on the original or log scale as
 * in `fit-rate-law.ts`.
 *
 * `response` holds yᵢ on the fitting scale (ln values when `logScale`). The Jacobian row is one array,
 * overwritten on every call (the solver copies it at once). Throws nothing.
 *
 * Example: `rateLawProblem(1, [0, 1], [100, 50], false, null).model([100, Math.LN2], 1, 1)` is 50.
 */
export function rateLawProblem(
  model: RateLawModel,
  times: ArrayLike<number>,
  response: ArrayLike<number>,
  logScale: boolean,
  fixedOrder: number | null,
): Omit<NonlinearProblem, 'initial'> & { parameterCount: 2 | 3 } {
  const parameterCount = model === 'n' && fixedOrder === null ? 3 : 2;
  const gradient = new Float64Array(3);
  const row = new Array<number>(parameterCount).fill(0);
  // The solver evaluates every point at one parameter vector in turn: prepare the law once per vector.
  let law: PreparedRateLaw | null = null;
  const valueAt = (parameters: readonly number[], time: number, derivatives: Float64Array | null): number => {
    if (model === 'n') {
      return initialRateLawAt(
        parameters[0]!,
        parameters[1]!,
        fixedOrder ?? parameters[2]!,
        time,
        derivatives,
      );
    }
    if (law === null || law.initialValue !== parameters[0] || law.rateConstant !== parameters[1]) {
      law = prepareRateLaw(model, parameters[0]!, parameters[1]!);
    }
    return rateLawAt(law, time, derivatives);
  };
  return {
    parameterCount,
    model: (parameters, time) => {
      const value = valueAt(parameters, time, null);
      return logScale ? Math.log(value) : value;
    },
    jacobian: (parameters, time) => {
      const value = valueAt(parameters, time, gradient);
      for (let a = 0; a < parameterCount; a++) row[a] = logScale ? gradient[a]! / value : gradient[a]!;
      return row;
    },
    x: Array.from(times),
    y: Array.from(response),
  };
}
