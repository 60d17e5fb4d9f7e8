/**
 * The integrated rate law C(t) of a reaction of order n, and its derivatives with respect to the
 * parameters (initial value C0, rate constant k, order n), evaluated at one time.
 *
 * Convention (stated in every method statement): the rate law is −dC/dt = k·Cⁿ, so k is positive
 * for a value that falls, and its unit is valueUnit^(1−n)/timeUnit (docs/methods.md#conventions).
 *
 * Formula in words:
 * - order 0: C = C0 − k·t until the value reaches 0 at t = C0/k, and 0 after that;
 * - order 1: C = C0·exp(−k·t);
 * - order 2: C = C0 / (1 + k·C0·t);
 * - general n ≠ 1: C^(1−n) = C0^(1−n) + (n − 1)·k·t. Written with m = n − 1, u = k·C0^m·t and
 *   x = m·u it is ln C = ln C0 − ln(1 + x)/m, and ln(1 + x)/m is computed as u·log1p(x)/x, which
 *   tends smoothly to u (first order) as n → 1, so orders near 1 lose no digits. For n < 1 the
 *   value reaches 0 where 1 + x = 0 and stays there; for n > 1 with a rising value (k < 0) the
 *   law has no solution once 1 + x ≤ 0, and the parameter set is reported as infeasible (NaN).
 * - derivatives of ln C: ∂/∂C0 = 1/(C0·(1 + x)), ∂/∂k = −t·C0^m/(1 + x),
 *   ∂/∂n = −(u²·q(x) + u·ln C0)/(1 + x) with q(x) = (x − (1 + x)·ln(1 + x))/x², whose series
 *   −1/2 + x/6 − x²/12 + x³/20 − … is used for small x. ∂C/∂θ = C·∂ln C/∂θ.
 *
 * Reference: integrated laws and their domain: OpenStax Chemistry 2e §12.4 (orders 0–2); the n-th-order
 * law as in Atkins, Physical Chemistry (from memory); the finite end of orders below 1 (M. Peleg,
 * Wolfram Demonstrations "Kinetic Order of Degradation Reactions"); derivatives by differentiation.
 *
 * Throws nothing; an infeasible parameter set returns NaN, which the fitter treats as "step rejected"
 * and never passes on.
 *
 * Example: `rateLawValue(1, 100, 0.1, 0, 10, null)` is 100·e^(−1) = 36.79;
 * `rateLawValue(2, 100, 0.001, 2, 10, null)` is 100/(1 + 1) = 50.
 */

/** Below this |x| the series of q(x) is used; its truncation error (< x⁶/56) is then below 1e-13. */
const SMALL_X_FOR_SERIES = 1e-2;

function q(x: number, log1pX: number): number {
  if (Math.abs(x) < SMALL_X_FOR_SERIES) {
    return -1 / 2 + x * (1 / 6 + x * (-1 / 12 + x * (1 / 20 + x * (-1 / 30 + x / 42))));
  }
  return (x - (1 + x) * log1pX) / (x * x);
}

/** The parameters of one rate law with the per-parameter-set constants precomputed once. */
export interface PreparedRateLaw {
  readonly order: 0 | 1 | 2 | 'n';
  readonly initialValue: number;
  readonly rateConstant: number;
  readonly n: number;
  /** ln C0 (general law only; NaN when C0 ≤ 0, which makes the general law infeasible). */
  readonly logInitial: number;
  /** C0^(n−1) (general law only). */
  readonly initialPower: number;
}

/** Precomputes ln C0 and C0^(n−1) so that evaluating many times costs two or three transcendental calls each. */
export function prepareRateLaw(
  order: 0 | 1 | 2 | 'n',
  initialValue: number,
  rateConstant: number,
  n: number = order === 'n' ? 1 : order,
): PreparedRateLaw {
  const logInitial = order === 'n' && initialValue > 0 ? Math.log(initialValue) : Number.NaN;
  const initialPower = order === 'n' ? Math.exp((n - 1) * logInitial) : 1;
  return { order, initialValue, rateConstant, n, logInitial, initialPower };
}

/**
 * C(t) for the prepared law. When `gradient` is given, ∂C/∂C0, ∂C/∂k and (general law only) ∂C/∂n
 * are written into it at indices 0, 1, 2.
 */
export function rateLawAt(law: PreparedRateLaw, time: number, gradient: Float64Array | null): number {
  const { order, initialValue, rateConstant } = law;
  if (order === 0) {
    const value = initialValue - rateConstant * time;
    if (value <= 0 && initialValue > 0 && rateConstant > 0) {
      if (gradient !== null) {
        gradient[0] = 0;
        gradient[1] = 0;
      }
      return 0;
    }
    if (gradient !== null) {
      gradient[0] = 1;
      gradient[1] = -time;
    }
    return value;
  }
  if (order === 1) {
    const decay = Math.exp(-rateConstant * time);
    const value = initialValue * decay;
    if (gradient !== null) {
      gradient[0] = decay;
      gradient[1] = -time * value;
    }
    return value;
  }
  if (order === 2) {
    const denominator = 1 + rateConstant * initialValue * time;
    if (!(denominator > 0)) return Number.NaN;
    const value = initialValue / denominator;
    if (gradient !== null) {
      gradient[0] = 1 / (denominator * denominator);
      gradient[1] = -time * value * value;
    }
    return value;
  }
  return generalOrderAt(law, time, gradient);
}

function generalOrderAt(law: PreparedRateLaw, time: number, gradient: Float64Array | null): number {
  const { initialValue, rateConstant, logInitial, initialPower } = law;
  if (!(initialValue > 0)) return Number.NaN;
  const m = law.n - 1;
  const u = rateConstant * initialPower * time;
  const x = m * u;
  const onePlusX = 1 + x;
  if (!(onePlusX > 0)) {
    if (m < 0) {
      if (gradient !== null) {
        gradient[0] = 0;
        gradient[1] = 0;
        gradient[2] = 0;
      }
      return 0;
    }
    return Number.NaN;
  }
  const log1pX = Math.log1p(x);
  const reduction = x === 0 ? u : (u * log1pX) / x;
  const value = Math.exp(logInitial - reduction);
  if (gradient !== null) {
    gradient[0] = value / (initialValue * onePlusX);
    gradient[1] = (-value * time * initialPower) / onePlusX;
    gradient[2] = (-value * (u * u * q(x, log1pX) + u * logInitial)) / onePlusX;
  }
  return value;
}

/** Convenience for one evaluation: `rateLawAt(prepareRateLaw(order, C0, k, n), t, gradient)`. */
export function rateLawValue(
  order: 0 | 1 | 2 | 'n',
  initialValue: number,
  rateConstant: number,
  n: number,
  time: number,
  gradient: Float64Array | null,
): number {
  return rateLawAt(prepareRateLaw(order, initialValue, rateConstant, n), time, gradient);
}

/**
 * The general law in initial-rate form, used by the free-order fit: parameters C0, r0 = k·C0ⁿ (the
 * initial rate, −dC/dt at t = 0) and n. Then u = (r0/C0)·t no longer depends on n, and at low
 * conversion C0 and r0 are fixed by the data almost independently of n, which straightens the long
 * curved valley of the (C0, k, n) parametrisation (a standard reparametrisation for conditioning;
 * Bates & Watts 1988 §3.2, from memory). ∂ln C/∂C0 = (1 + u/(1 + x))/C0, ∂ln C/∂r0 = −t/(C0·(1 + x)),
 * ∂ln C/∂n = −u²·q(x)/(1 + x). Returns NaN where the law is undefined (C0 ≤ 0, or 1 + x ≤ 0 with n > 1).
 *
 * Example: `initialRateLawAt(100, 1, 1, 10, null)` is 100·e^(−0.1) = 90.48 (first order, k = 0.01).
 */
export function initialRateLawAt(
  initialValue: number,
  initialRate: number,
  n: number,
  time: number,
  gradient: Float64Array | null,
): number {
  if (!(initialValue > 0)) return Number.NaN;
  const m = n - 1;
  const u = (initialRate / initialValue) * time;
  const x = m * u;
  const onePlusX = 1 + x;
  if (!(onePlusX > 0)) {
    if (m < 0) {
      if (gradient !== null) gradient.fill(0);
      return 0;
    }
    return Number.NaN;
  }
  const log1pX = Math.log1p(x);
  const value = initialValue * Math.exp(-(x === 0 ? u : (u * log1pX) / x));
  if (gradient !== null) {
    gradient[0] = (value * (1 + u / onePlusX)) / initialValue;
    gradient[1] = (-value * time) / (initialValue * onePlusX);
    gradient[2] = (-value * u * u * q(x, log1pX)) / onePlusX;
  }
  return value;
}
