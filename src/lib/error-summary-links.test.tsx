import { fireEvent } from '@testing-library/react';
import { afterEach, describe, expect, it } from 'vitest';
import { focusFieldsFromErrorSummaries } from './error-summary-links.ts';

afterEach(() => {
  document.body.innerHTML = '';
});

describe('error summary links', () => {
  focusFieldsFromErrorSummaries(document);
  Element.prototype.scrollIntoView = () => undefined;

  it('a link of an error summary moves focus to the field it names', () => {
    document.body.innerHTML = `
      <div data-error-summary tabindex="-1"><ul><li><a href="#sign-password">Enter your password.</a></li></ul></div>
      <label for="sign-password">Password</label><input id="sign-password" type="password">`;
    const link = document.querySelector('a')!;
    const notPrevented = fireEvent.click(link);
    expect(document.activeElement).toBe(document.getElementById('sign-password'));
    expect(notPrevented).toBe(false);
  });

  it('leaves other fragment links alone', () => {
    document.body.innerHTML = `
      <p><a href="#record-heading">what this version rests on</a></p>
      <h2 id="record-heading">Record</h2><input id="other">`;
    const notPrevented = fireEvent.click(document.querySelector('a')!);
    expect(notPrevented).toBe(true);
    expect(document.activeElement).toBe(document.body);
  });
});
