import { describe, expect, it } from 'vitest';
import { signFormErrorSummary } from './form-error-summary.ts';

describe('the sign form error summary', () => {
  it('lists refused fields in the form order, each linking to its control', () => {
    expect(
      signFormErrorSummary({
        password: 'Enter your password.',
        meaning: 'Choose the meaning of your signature.',
      }),
    ).toEqual([
      { message: 'Choose the meaning of your signature.', href: '#sign-meaning' },
      { message: 'Enter your password.', href: '#sign-password' },
    ]);
  });

  it('links the checklist to its first box, and lists a message about no field without a link, last', () => {
    expect(
      signFormErrorSummary({
        reviewedSha256: 'The form is incomplete; reload the page.',
        checklistConfirmed: 'Tick each point.',
      }),
    ).toEqual([
      { message: 'Tick each point.', href: '#sign-checklist-0' },
      { message: 'The form is incomplete; reload the page.', href: null },
    ]);
  });

  it('is empty when no field was refused', () => {
    expect(signFormErrorSummary({})).toEqual([]);
    expect(signFormErrorSummary({ password: '' })).toEqual([]);
  });
});
