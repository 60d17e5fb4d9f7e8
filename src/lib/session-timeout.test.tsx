import { readFileSync } from 'node:fs';
import path from 'node:path';
import { fireEvent } from '@testing-library/react';
import Handlebars from 'handlebars';
import { afterEach, beforeAll, beforeEach, describe, expect, it, vi } from 'vitest';
import { json, mockApi, refusal, setCsrfToken } from '../testing/api-mock.ts';
import { fetchJson } from './http.ts';
import { LAST_USE_KEY, timeLeftInWords, watchSessionTimeout } from './session-timeout.ts';

/**
 * The warning before the idle sign-out (issue 17, WCAG 2.2.1), on the layout's real dialog
 * markup (the Handlebars partial, rendered here) with a fake clock: 30-minute timeout, so the
 * sign-out comes no sooner than 29 minutes after the last request and the warning 2 minutes
 * before that.
 */

const MINUTE = 60_000;
const SIGN_OUT_IN = 29 * MINUTE;
const WARN_BEFORE = 2 * MINUTE;
const PARTIAL = readFileSync(
  path.resolve(import.meta.dirname, '../../server/platform/web/views/partials/session-timeout.hbs'),
  'utf8',
);

beforeAll(() => {
  // jsdom has <dialog> without its methods; a stand-in with the parts the script relies on
  // (the browser test runs the real one).
  const proto = HTMLDialogElement.prototype as HTMLDialogElement & { showModal?: () => void };
  if (typeof proto.showModal !== 'function') {
    proto.showModal = function showModal(this: HTMLDialogElement) {
      this.setAttribute('open', '');
    };
    proto.close = function close(this: HTMLDialogElement) {
      if (!this.hasAttribute('open')) return;
      this.removeAttribute('open');
      this.dispatchEvent(new Event('close'));
    };
  }
});

let stop: () => void = () => undefined;

beforeEach(() => {
  vi.useFakeTimers({ toFake: ['Date', 'setInterval', 'clearInterval', 'setTimeout', 'clearTimeout'] });
  vi.setSystemTime(new Date('2026-12-04T10:00:00Z'));
  localStorage.clear();
  setCsrfToken('token-123');
  document.body.innerHTML = `
    <main><label for="note">Note</label><input id="note"></main>
    ${Handlebars.compile(PARTIAL)({
      sessionTimeout: { idleMinutes: 30, signOutInMs: SIGN_OUT_IN, warnBeforeMs: WARN_BEFORE },
    })}`;
});

afterEach(() => {
  stop();
  vi.useRealTimers();
  vi.unstubAllGlobals();
  document.body.innerHTML = '';
});

const dialog = () => document.querySelector<HTMLDialogElement>('#session-timeout')!;
const stay = () => document.querySelector<HTMLButtonElement>('[data-session-extend]')!;
const visible = (selector: string) => !document.querySelector<HTMLElement>(selector)!.hidden;

/** A person typing into the form, then leaving the page alone. */
function startTyping(): HTMLInputElement {
  const note = document.querySelector<HTMLInputElement>('#note')!;
  note.focus();
  note.value = 'Half a sentence';
  return note;
}

describe('the warning before the idle sign-out', () => {
  it('opens 2 minutes before the earliest sign-out, focused on "Stay signed in", and says how long is left', async () => {
    mockApi([]);
    stop = watchSessionTimeout(document);
    startTyping();
    await vi.advanceTimersByTimeAsync(SIGN_OUT_IN - WARN_BEFORE - 2_000);
    expect(dialog().open).toBe(false);
    await vi.advanceTimersByTimeAsync(3_000);
    expect(dialog().open).toBe(true);
    expect(visible('[data-session-warning]')).toBe(true);
    expect(visible('[data-session-ended]')).toBe(false);
    expect(document.activeElement).toBe(stay());
    expect(dialog().getAttribute('aria-labelledby')).toBe('session-timeout-title');
    expect(document.getElementById('session-timeout-title')!.textContent).toBe(
      'You will be signed out in 2 minutes',
    );
    await vi.advanceTimersByTimeAsync(75_000);
    expect(document.getElementById('session-timeout-title')!.textContent).toBe(
      'You will be signed out in 44 seconds',
    );
  });

  it('"Stay signed in" extends the session (CSRF header), closes, and gives focus and the typed text back', async () => {
    const requests = mockApi([
      { method: 'POST', path: '/api/session/extend', respond: () => json(200, { signOutInMs: 30 * MINUTE }) },
    ]);
    stop = watchSessionTimeout(document);
    const note = startTyping();
    await vi.advanceTimersByTimeAsync(SIGN_OUT_IN - WARN_BEFORE + 1_000);
    expect(dialog().open).toBe(true);
    fireEvent.click(stay());
    await vi.waitFor(() => expect(dialog().open).toBe(false));
    expect(requests).toHaveLength(1);
    expect(requests[0]!.method).toBe('POST');
    expect(requests[0]!.headers.get('x-csrf-token')).toBe('token-123');
    expect(document.activeElement).toBe(note);
    expect(note.value).toBe('Half a sentence');
    // The server's full 30 minutes count from now: no warning until 28 minutes from now.
    await vi.advanceTimersByTimeAsync(28 * MINUTE - 2_000);
    expect(dialog().open).toBe(false);
    await vi.advanceTimersByTimeAsync(3_000);
    expect(dialog().open).toBe(true);
  });

  it('any answer from the server to this page counts as a request: the warning waits', async () => {
    mockApi([{ path: '/api/me', respond: () => json(200, {}) }]);
    stop = watchSessionTimeout(document);
    await vi.advanceTimersByTimeAsync(20 * MINUTE);
    await fetchJson('/api/me', (await import('zod')).z.object({}));
    await vi.advanceTimersByTimeAsync(SIGN_OUT_IN - WARN_BEFORE - 2_000);
    expect(dialog().open).toBe(false);
    await vi.advanceTimersByTimeAsync(3_000);
    expect(dialog().open).toBe(true);
    // …and another tab shares its own requests through localStorage.
    expect(Number(localStorage.getItem(LAST_USE_KEY))).toBe(Date.now() - (SIGN_OUT_IN - WARN_BEFORE + 1_000));
  });

  it('a request in another tab closes the warning here', async () => {
    mockApi([]);
    stop = watchSessionTimeout(document);
    await vi.advanceTimersByTimeAsync(SIGN_OUT_IN - WARN_BEFORE + 1_000);
    expect(dialog().open).toBe(true);
    window.dispatchEvent(new StorageEvent('storage', { key: LAST_USE_KEY, newValue: String(Date.now()) }));
    expect(dialog().open).toBe(false);
    await vi.advanceTimersByTimeAsync(SIGN_OUT_IN - WARN_BEFORE - 2_000);
    expect(dialog().open).toBe(false);
  });

  it('Escape dismisses the warning; at the sign-out time the dialog says the session ended and how to go on', async () => {
    mockApi([]);
    stop = watchSessionTimeout(document);
    const note = startTyping();
    await vi.advanceTimersByTimeAsync(SIGN_OUT_IN - WARN_BEFORE + 1_000);
    fireEvent(dialog(), new Event('cancel'));
    dialog().close();
    expect(document.activeElement).toBe(note);
    await vi.advanceTimersByTimeAsync(WARN_BEFORE - 3_000);
    expect(dialog().open).toBe(false);
    await vi.advanceTimersByTimeAsync(3_000);
    expect(dialog().open).toBe(true);
    expect(visible('[data-session-ended]')).toBe(true);
    expect(visible('[data-session-warning]')).toBe(false);
    expect(dialog().getAttribute('aria-labelledby')).toBe('session-ended-title');
    const signIn = document.querySelector<HTMLAnchorElement>('[data-session-ended] a')!;
    expect(document.activeElement).toBe(signIn);
    expect(signIn.getAttribute('target')).toBe('_blank');
    // Closing it leaves the form as it was.
    fireEvent.click(document.querySelector('[data-session-close]')!);
    expect(dialog().open).toBe(false);
    expect(document.activeElement).toBe(note);
    expect(note.value).toBe('Half a sentence');
  });

  it('an extension the server refuses (the session already ended) shows the ended dialog', async () => {
    mockApi([
      {
        method: 'POST',
        path: '/api/session/extend',
        respond: () => refusal(403, 'The form has expired or did not come from Rateledger.'),
      },
    ]);
    stop = watchSessionTimeout(document);
    await vi.advanceTimersByTimeAsync(SIGN_OUT_IN - WARN_BEFORE + 1_000);
    fireEvent.click(stay());
    await vi.waitFor(() => expect(visible('[data-session-ended]')).toBe(true));
    expect(dialog().open).toBe(true);
  });

  it('an extension that fails otherwise says so in the dialog, which stays open to try again', async () => {
    mockApi([
      { method: 'POST', path: '/api/session/extend', respond: () => refusal(500, 'Something went wrong.') },
    ]);
    stop = watchSessionTimeout(document);
    await vi.advanceTimersByTimeAsync(SIGN_OUT_IN - WARN_BEFORE + 1_000);
    fireEvent.click(stay());
    await vi.waitFor(() => expect(visible('[data-session-error]')).toBe(true));
    expect(document.querySelector('[data-session-error]')!.textContent).toBe(
      'Not extended: Something went wrong. Choose “Stay signed in” again.',
    );
    expect(dialog().open).toBe(true);
    expect(stay().disabled).toBe(false);
  });

  it('does nothing on a page without the dialog (signed out)', async () => {
    document.body.innerHTML = '<main></main>';
    stop = watchSessionTimeout(document);
    await vi.advanceTimersByTimeAsync(40 * MINUTE);
    expect(document.querySelector('dialog')).toBeNull();
  });
});

describe('the time left in words', () => {
  it('rounds up: minutes above a minute, seconds below', () => {
    expect(timeLeftInWords(120_000)).toBe('2 minutes');
    expect(timeLeftInWords(61_000)).toBe('2 minutes');
    expect(timeLeftInWords(60_000)).toBe('1 minute');
    expect(timeLeftInWords(59_100)).toBe('60 seconds');
    expect(timeLeftInWords(44_000)).toBe('44 seconds');
    expect(timeLeftInWords(900)).toBe('1 second');
  });
});
