/**
 * Every answer from the server to a signed-in page rolls the session (the idle sign-out counts
 * from the last request), so the fetch wrapper reports each one here and the sign-out warning
 * (`session-timeout.ts`) counts again from it. A module of its own so that the wrapper and the
 * warning, which itself calls the wrapper, do not import each other.
 */
type Listener = () => void;

const listeners = new Set<Listener>();

/** The server has just answered a request of this page (any answer but "sign in first" or a failure). */
export function noteSessionUse(): void {
  for (const listener of listeners) listener();
}

/** Calls `listener` after each request the server answered; returns the function that stops it. */
export function onSessionUse(listener: Listener): () => void {
  listeners.add(listener);
  return () => listeners.delete(listener);
}
