import { describe, expect, it } from 'vitest';
import { KineticsError } from './kinetics-error.ts';

describe('KineticsError', () => {
  it('carries a code, a message and optional details, and is an Error (common practice)', () => {
    const error = new KineticsError('too-few-points', 'A straight line needs at least 3 points; got 2.', {
      n: 2,
    });
    expect(error).toBeInstanceOf(Error);
    expect(error.name).toBe('KineticsError');
    expect(error.code).toBe('too-few-points');
    expect(error.details).toEqual({ n: 2 });
    expect(new KineticsError('not-applicable', 'n/a').details).toBeUndefined();
  });
});
