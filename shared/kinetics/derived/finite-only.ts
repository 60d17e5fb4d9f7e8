/**
 * Replaces any non-finite number by null in a result object, in place, so that it serialises to JSON without
 * loss (JSON.stringify would write NaN and Infinity as null silently, and a reader could not tell why).
 *
 * Why a final pass: every function of the engine already returns finite numbers or null; this is the last
 * guarantee before a result leaves the engine. `skip` (the per-point residual table, up to 10⁵ rows, which
 * `residualDiagnostics` builds finite) is left alone to keep long series fast.
 *
 * Throws nothing.
 *
 * Example: `finiteOnly({ a: 1, b: [Number.NaN, 2] }, null)` is `{ a: 1, b: [null, 2] }`.
 */
export function finiteOnly<T>(value: T, skip: unknown): T {
  const visit = (item: unknown): unknown => {
    if (typeof item === 'number') return Number.isFinite(item) ? item : null;
    if (Array.isArray(item)) {
      for (let i = 0; i < item.length; i++) item[i] = visit(item[i]);
      return item;
    }
    if (item !== null && typeof item === 'object') {
      if (item === skip) return item;
      const record = item as Record<string, unknown>;
      for (const key of Object.keys(record)) record[key] = visit(record[key]);
      return record;
    }
    return item;
  };
  return visit(value) as T;
}
