/**
 * Whether a value unit names an amount that cannot be below zero: a content or concentration
 * ("% of label claim", "% w/w", "mg/mL", "µg/g", "ppm", "mmol/L", "CFU/g"). A negative number in
 * such a column is a typing error or a result below the detection or quantitation limit written
 * as a number; the intake warns on its cell (issue 12 §6) and keeps it as written.
 *
 * Why by unit: the mapping knows the unit of the value column and nothing else about the
 * attribute. A percentage is an amount unless the unit says it is a change or a difference
 * ("% change", "Δ%"), which may well be negative; so are quantities on open scales (mV, pH units,
 * degrees of rotation, log units), which this function does not list. An unknown unit gives
 * false: no warning rather than a wrong one.
 *
 * Formula in words: false when the unit mentions a change, difference, deviation or log; true
 * when it holds a percent or per-mille sign, ppm/ppb, "label claim" or CFU, or when its numerator
 * is a mass (g, kg, mg, µg, ug, mcg, ng, pg) or an amount of substance (mol, mmol, µmol, nmol,
 * or M, mM, µM, nM for mol/L). Common practice (contents and concentrations are not negative).
 *
 * Throws nothing. Example: valueCannotBeNegative('% of label claim') is true,
 * valueCannotBeNegative('% change from initial') is false, valueCannotBeNegative('mV') is false.
 */

const SIGNED_WORDS = /chang|differen|deviat|\bdelta\b|Δ|\blog|\bbias\b|\bdrift\b/i;
const AMOUNT_WORDS = /%|‰|\bppm\b|\bppb\b|label\s*claim|\bcfu\b/i;
const AMOUNT_NUMERATOR = /^(?:[kmµμunp]?g|mcg|[mµμunp]?mol|[mµμun]?M)$/;

export function valueCannotBeNegative(unit: string): boolean {
  const text = unit.trim();
  if (text === '' || SIGNED_WORDS.test(text)) return false;
  if (AMOUNT_WORDS.test(text)) return true;
  const numerator = text.split(/\s*(?:\/|per\s)\s*|\s+/)[0] ?? '';
  return AMOUNT_NUMERATOR.test(numerator);
}
