import { KineticsError } from './numeric/kinetics-error.ts';
import type { RateLawModel } from './order/fit-rate-law.ts';

/**
 * Why a rate law cannot describe a series with a negative value, or null when it can. The
 * first-order law C = C0·e^(−k·t) keeps the sign of C0 and never crosses zero; the second-order
 * law 1/C = 1/C0 + k·t has no negative C for C0 > 0 and k ≥ 0 before its pole; the free order's
 * Cⁿ is not real for a negative C and non-integer n. Only the zero-order line C = C0 − k·t can
 * pass below zero. Fitting those laws anyway gives numbers that mean nothing, so they are not
 * applicable for such a series, with this reason (issue 12 §6). A value of exactly zero is left
 * to the fits (a result at the detection limit written as 0 with constant error is allowed).
 *
 * Reference: the integrated rate laws, e.g. Atkins & de Paula, Physical Chemistry, 9th ed.,
 * §21.3 (integrated rate laws).
 *
 * Throws nothing. Example: values 1.0, 0.4, −0.2 at 0, 3, 6 months give for model 1 "the
 * first-order law (C = C0·e^(−k·t)) cannot produce a negative value, and the point at time 6 has
 * value -0.2".
 */
const LAW_WORDS: Record<Exclude<RateLawModel, 0>, string> = {
  1: 'the first-order law (C = C0·e^(−k·t))',
  2: 'the second-order law (1/C = 1/C0 + k·t)',
  n: 'the free-order law (dC/dt = −k·Cⁿ)',
};

export function negativeValueReason(
  model: RateLawModel,
  values: ArrayLike<number>,
  labelOf: (index: number) => string,
): string | null {
  if (model === 0) return null;
  for (let index = 0; index < values.length; index++) {
    if (values[index]! < 0) {
      return `${LAW_WORDS[model]} cannot produce a negative value, and ${labelOf(index)} has value ${values[index]}`;
    }
  }
  return null;
}

/** Refuses the analyst's first- or second-order choice for a series with a negative value. */
export function refuseFixedOrderWithNegativeValue(
  id: string,
  order: RateLawModel | undefined,
  values: ArrayLike<number>,
  labelOf: (index: number) => string,
): void {
  if (order === undefined) return;
  const reason = negativeValueReason(order, values, labelOf);
  if (reason !== null) {
    throw new KineticsError(
      'non-positive-value',
      `Series ${id} cannot be analysed with the order fixed at ${order}: ${reason}. Fix the value or fit zero order.`,
      { id, order },
    );
  }
}
