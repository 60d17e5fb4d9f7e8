/**
 * Relative step of central differences: the cube root of machine epsilon balances the
 * truncation error (∝ h²) against rounding (∝ ε/h), giving about 10 correct digits.
 */
const CENTRAL_DIFFERENCE_STEP = Math.cbrt(Number.EPSILON);

/**
 * Gradient of a model with respect to its parameters at one x, by central differences:
 * ∂f/∂pⱼ ≈ (f(p + hⱼ·eⱼ) − f(p − hⱼ·eⱼ)) / (2·hⱼ).
 *
 * Why: lets a caller fit any model without writing derivatives. Central differences are second-
 * order accurate, which keeps standard errors correct to about 8 digits instead of 5 for forward
 * differences.
 *
 * Formula in words: the step hⱼ is ε^(1/3) times |pⱼ| (ε^(1/3) itself when pⱼ = 0), so that a
 * rate constant of 5e-4 and a concentration of 240 are both perturbed by the same relative
 * amount; the step is rounded to a number exactly representable next to pⱼ.
 *
 * Reference: J. E. Dennis, R. B. Schnabel, "Numerical Methods for Unconstrained Optimization and
 * Nonlinear Equations", SIAM 1996, §5.6; C. T. Kelley, "Iterative Methods for Optimization",
 * SIAM 1999, §2.3 (https://archive.siam.org/books/textbooks/fr18_book.pdf).
 *
 * Throws nothing; non-finite model values give non-finite entries, which the caller checks.
 *
 * Example: for f(p, x) = p[0]·x² at p = [3], x = 2 the gradient is [4] (to about 10 digits).
 */
export function numericGradient(
  model: (parameters: readonly number[], x: number, index: number) => number,
  parameters: readonly number[],
  x: number,
  index: number,
): number[] {
  const perturbed = [...parameters];
  return parameters.map((value, j) => {
    const scale = value === 0 ? 1 : Math.abs(value);
    const step = value + CENTRAL_DIFFERENCE_STEP * scale - value;
    const upperValue = value + step;
    const lowerValue = value - step;
    perturbed[j] = upperValue;
    const above = model(perturbed, x, index);
    perturbed[j] = lowerValue;
    const below = model(perturbed, x, index);
    perturbed[j] = value;
    return (above - below) / (upperValue - lowerValue);
  });
}
