import { describe, expect, it } from 'vitest';
import { finiteOnly } from './finite-only.ts';

describe('finiteOnly', () => {
  it('doc example: NaN and ±Infinity become null, other values stay', () => {
    expect(
      finiteOnly({ a: 1, b: [Number.NaN, 2], c: { d: Number.POSITIVE_INFINITY, e: 'x' } }, null),
    ).toEqual({
      a: 1,
      b: [null, 2],
      c: { d: null, e: 'x' },
    });
  });

  it('leaves the skipped sub-object untouched', () => {
    const skip = { value: Number.NaN };
    const result = finiteOnly({ keep: skip, other: Number.NaN }, skip);
    expect(Number.isNaN(result.keep.value)).toBe(true);
    expect(result.other).toBeNull();
  });
});
