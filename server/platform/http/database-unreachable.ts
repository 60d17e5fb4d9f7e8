/**
 * Whether an error means "PostgreSQL cannot be reached right now" rather than "this request is
 * wrong" or "the code is wrong". Such requests get a 503 with a plain message and a Retry-After,
 * never a 500: nothing is broken that a minute's wait will not mend, and the pool reconnects by
 * itself once the database answers again (no restart).
 *
 * The error arrives in many wrappings: node-postgres' own (`code` = SQLSTATE or a socket errno),
 * drizzle's `DrizzleQueryError` (the driver error in `cause`), Node's `AggregateError` when every
 * address of a host refused (`errors`), and express-session or passport passing the store's error
 * on. So the chain of `cause` and `errors` is walked, a few levels deep.
 */

/** Socket errors of a connection that could not be made or was lost. */
const NETWORK_CODES = new Set([
  'ECONNREFUSED',
  'ECONNRESET',
  'ETIMEDOUT',
  'EHOSTUNREACH',
  'EHOSTDOWN',
  'ENETUNREACH',
  'ENOTFOUND',
  'EAI_AGAIN',
  'EPIPE',
]);

/**
 * SQLSTATEs of a server that is going away, starting, or full (PostgreSQL manual, Appendix A):
 * class 08 connection exception, 57P01 admin_shutdown, 57P02 crash_shutdown, 57P03
 * cannot_connect_now, 53300 too_many_connections.
 */
const UNAVAILABLE_SQLSTATES = new Set(['57P01', '57P02', '57P03', '53300']);

/** node-postgres and pg-pool say these in words, without a code. */
const LOST_CONNECTION_MESSAGES = [
  'Connection terminated', // "… unexpectedly", "… due to connection timeout"
  'timeout exceeded when trying to connect',
  'Client has encountered a connection error and is not queryable',
];

export const DATABASE_UNREACHABLE_MESSAGE =
  'The database is not reachable. Try again in a minute; nothing you sent was saved half-way.';

export function isDatabaseUnreachable(error: unknown, depth = 0): boolean {
  if (depth > 5 || error === null || typeof error !== 'object') return false;
  const typed = error as { code?: unknown; message?: unknown; cause?: unknown; errors?: unknown };
  const code = typeof typed.code === 'string' ? typed.code : '';
  const connectionException = code.length === 5 && code.startsWith('08');
  if (NETWORK_CODES.has(code) || UNAVAILABLE_SQLSTATES.has(code) || connectionException) return true;
  const message = typeof typed.message === 'string' ? typed.message : '';
  if (LOST_CONNECTION_MESSAGES.some((known) => message.startsWith(known))) return true;
  if (isDatabaseUnreachable(typed.cause, depth + 1)) return true;
  return Array.isArray(typed.errors) && typed.errors.some((inner) => isDatabaseUnreachable(inner, depth + 1));
}
