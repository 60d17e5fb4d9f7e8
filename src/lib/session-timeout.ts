import { sessionExtendResponseSchema } from '../../shared/api/session.ts';
import { ApiError, fetchJson } from './http.ts';
import { onSessionUse } from './session-activity.ts';

/**
 * The warning before the idle sign-out (WCAG 2.1 2.2.1 Timing Adjustable, technique SCR16
 * "Providing a script that warns the user a time limit is about to expire":
 * https://www.w3.org/WAI/WCAG21/Techniques/client-side-script/SCR16). The layout renders the
 * dialog (`partials/session-timeout.hbs`) for a signed-in person, with how long after the page's
 * request the sign-out can come at the earliest and how long before that to warn.
 *
 * The count starts again at each answer from the server (the page itself, and every API call
 * through `fetchJson`), also in the person's other tabs (shared through localStorage). When the
 * warning time comes the dialog opens as a modal, focus on "Stay signed in", which calls
 * `POST /api/session/extend`; closing the dialog puts focus back where it was, so a half-filled
 * form stays as it was. Escape dismisses the warning until the sign-out. At the sign-out time the
 * dialog says the session has ended and how to go on without losing what was typed.
 */

/** Where tabs of the same browser tell each other of their last request (ms since the epoch). */
export const LAST_USE_KEY = 'rateledger.session.last-use';

/** How often the clock is looked at (and the time left in the warning updated). */
const TICK_MS = 1_000;

type State = 'quiet' | 'warning' | 'dismissed' | 'ended';

/** "2 minutes", "1 minute", "45 seconds": the time left, rounded up, in words. */
export function timeLeftInWords(ms: number): string {
  if (ms >= 60_000) {
    const minutes = Math.ceil(ms / 60_000);
    return minutes === 1 ? '1 minute' : `${minutes} minutes`;
  }
  const seconds = Math.max(1, Math.ceil(ms / 1_000));
  return seconds === 1 ? '1 second' : `${seconds} seconds`;
}

/**
 * Starts the warning for the page's dialog, if it has one (signed in); returns the function that
 * stops it (tests).
 */
export function watchSessionTimeout(root: Document): () => void {
  const dialog = root.querySelector<HTMLDialogElement>('dialog#session-timeout');
  const signOutInMs = Number(dialog?.dataset.signOutInMs);
  const warnBeforeMs = Number(dialog?.dataset.warnBeforeMs);
  if (!dialog || !(signOutInMs > 0) || !(warnBeforeMs > 0)) return () => undefined;
  const part = <T extends HTMLElement>(selector: string) => dialog.querySelector<T>(selector)!;
  const warning = part('[data-session-warning]');
  const ended = part('[data-session-ended]');
  const timeLeft = part('[data-session-time-left]');
  const error = part('[data-session-error]');
  const extend = part<HTMLButtonElement>('[data-session-extend]');
  const view = root.defaultView ?? window;

  let lastUse = Date.now();
  let state: State = 'quiet';
  let focusBefore: HTMLElement | null = null;

  const share = () => {
    try {
      view.localStorage.setItem(LAST_USE_KEY, String(lastUse));
    } catch {
      // Storage refused (private mode, quota): this tab still counts for itself.
    }
  };

  const open = () => {
    if (dialog.open) return;
    const active = root.activeElement;
    focusBefore = active instanceof HTMLElement && active !== root.body ? active : null;
    dialog.showModal();
  };

  const close = () => {
    if (dialog.open) dialog.close();
  };

  const show = (which: 'warning' | 'ended') => {
    warning.hidden = which !== 'warning';
    ended.hidden = which !== 'ended';
    dialog.setAttribute(
      'aria-labelledby',
      which === 'warning' ? 'session-timeout-title' : 'session-ended-title',
    );
    dialog.setAttribute(
      'aria-describedby',
      which === 'warning' ? 'session-timeout-text' : 'session-ended-text',
    );
  };

  const check = () => {
    if (state === 'ended') return;
    const left = lastUse + signOutInMs - Date.now();
    if (left <= 0) {
      state = 'ended';
      view.clearInterval(timer);
      show('ended');
      open();
      part<HTMLAnchorElement>('[data-session-ended] a').focus();
      return;
    }
    if (left > warnBeforeMs) {
      // A request here or in another tab moved the sign-out away.
      if (state === 'warning') close();
      state = 'quiet';
      return;
    }
    timeLeft.textContent = timeLeftInWords(left);
    if (state === 'quiet') {
      state = 'warning';
      show('warning');
      error.hidden = true;
      open();
      extend.focus();
    }
  };

  const used = (at: number) => {
    if (state === 'ended' || at <= lastUse) return;
    lastUse = at;
    check();
  };

  dialog.addEventListener('close', () => {
    // The native dialog restores focus in browsers that do; this does it everywhere.
    if (focusBefore?.isConnected) focusBefore.focus();
    focusBefore = null;
  });
  // Escape: the person has seen the warning; it stays away until the sign-out itself.
  dialog.addEventListener('cancel', () => {
    if (state === 'warning') state = 'dismissed';
  });
  part('[data-session-close]').addEventListener('click', close);
  extend.addEventListener('click', async () => {
    extend.disabled = true;
    error.hidden = true;
    try {
      const answer = await fetchJson('/api/session/extend', sessionExtendResponseSchema, { method: 'POST' });
      // fetchJson has reported the request (and closed the warning); count from the server's answer.
      lastUse = Math.max(lastUse, Date.now() + answer.signOutInMs - signOutInMs);
      share();
      check();
    } catch (failure) {
      if (failure instanceof ApiError && (failure.status === 401 || failure.status === 403)) {
        lastUse = Date.now() - signOutInMs;
        check();
      } else {
        const reason = failure instanceof Error ? failure.message.replace(/\.?$/, '.') : 'No answer.';
        error.textContent = `Not extended: ${reason} Choose “Stay signed in” again.`;
        error.hidden = false;
      }
    } finally {
      extend.disabled = false;
    }
  });

  const stopUse = onSessionUse(() => {
    used(Date.now());
    share();
  });
  const fromOtherTab = (event: StorageEvent) => {
    if (event.key === LAST_USE_KEY && event.newValue) used(Number(event.newValue));
  };
  view.addEventListener('storage', fromOtherTab);
  const timer = view.setInterval(check, TICK_MS);
  share();

  return () => {
    view.clearInterval(timer);
    view.removeEventListener('storage', fromOtherTab);
    stopUse();
    close();
  };
}
