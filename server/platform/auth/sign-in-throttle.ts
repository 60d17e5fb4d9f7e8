import { sql } from 'drizzle-orm';
import type { Transaction } from '../db/client.ts';

/**
 * Failed sign-ins are counted per account *and* client together, so that nobody can lock the
 * owner out by failing on purpose (21 CFR 11.300(d) and EU GMP Annex 11 §12 ask for the lock;
 * OWASP Authentication Cheat Sheet, "account lockout", warns how it can be turned against users):
 *
 * - **Client lock.** A client is the browser when it shows a valid known-browser cookie for the
 *   account (`known-browser.ts`), otherwise its network (`client-network.ts`). When one client
 *   reaches the organisation's `lockout_threshold` failures within `lockout_minutes`, that client
 *   is refused on that account for `lockout_minutes`. Other clients — the owner elsewhere, the
 *   owner's own browser — are not affected.
 * - **Account lock.** Guessing spread over many networks is stopped when clients without the
 *   cookie reach `ACCOUNT_WIDE_FACTOR` × the threshold within the period: then every client
 *   without the cookie is refused for `lockout_minutes`; the owner's own browser still gets in.
 * - **Never extended.** A refused attempt is not counted and does not move the end of a lock.
 * - **Lifted together.** `users.locked_until` holds the end of the latest lock in force and is
 *   what an administrator's unlock and a password reset clear; a lock row counts only while it is
 *   set, so those actions lift every lock of the account at once.
 *
 * The counters are rows of `rate_limit_hits` (key, hits, reset_at): fewer hits than the limit is
 * a counting window ending at reset_at; hits at the limit is a lock ending at reset_at.
 */

export const ACCOUNT_WIDE_FACTOR = 3;

export type ThrottleClient = { kind: 'address'; network: string } | { kind: 'browser'; nonce: string };
export type LockScope = 'address' | 'browser' | 'account';

export interface ThrottleRules {
  threshold: number;
  minutes: number;
}

interface Counter {
  hits: number;
  resetAt: Date;
  running: boolean;
}

export interface ThrottleState {
  prefix: string;
  userId: number;
  client: ThrottleClient;
  rules: ThrottleRules;
  /** `users.locked_until` is in the future: the lock rows count. */
  locksInForce: boolean;
  pair: Counter | null;
  account: Counter | null;
}

export interface Lock {
  scope: LockScope;
  until: Date;
}

const pairPrefix = (prefix: string, userId: number) => `${prefix}signin-pair:${userId}:`;
const pairKey = (state: Pick<ThrottleState, 'prefix' | 'userId' | 'client'>) =>
  `${pairPrefix(state.prefix, state.userId)}${
    state.client.kind === 'browser' ? `browser:${state.client.nonce}` : `address:${state.client.network}`
  }`;
const accountKey = (prefix: string, userId: number) => `${prefix}signin-account:${userId}`;
const accountLimit = (rules: ThrottleRules) => rules.threshold * ACCOUNT_WIDE_FACTOR;

/** Reads (and row-locks) the client's and the account's counters; the user row is locked already. */
export async function loadThrottle(
  tx: Transaction,
  input: Omit<ThrottleState, 'pair' | 'account'>,
): Promise<ThrottleState> {
  const keys = { pair: pairKey(input), account: accountKey(input.prefix, input.userId) };
  const result = await tx.execute<{ key: string; hits: number; reset_ms: string; running: boolean }>(
    sql`select key, hits, (extract(epoch from reset_at) * 1000)::text as reset_ms, reset_at > now() as running
          from rate_limit_hits where key in (${keys.pair}, ${keys.account}) for update`,
  );
  const counter = (key: string): Counter | null => {
    const row = result.rows.find((candidate) => candidate.key === key);
    return row ? { hits: row.hits, resetAt: new Date(Number(row.reset_ms)), running: row.running } : null;
  };
  return { ...input, pair: counter(keys.pair), account: counter(keys.account) };
}

/** The lock that refuses this client now, if any. */
export function lockInForce(state: ThrottleState): Lock | null {
  if (!state.locksInForce) return null;
  const { pair, account, rules, client } = state;
  if (client.kind === 'address' && account?.running && account.hits >= accountLimit(rules))
    return { scope: 'account', until: account.resetAt };
  if (pair?.running && pair.hits >= rules.threshold) return { scope: client.kind, until: pair.resetAt };
  return null;
}

/** The next count of a counter: one more in a running window, else (expired or lifted) one. */
const nextCount = (counter: Counter | null, limit: number) =>
  counter?.running && counter.hits < limit ? counter.hits + 1 : 1;

async function writeCounter(
  tx: Transaction,
  key: string,
  hits: number,
  restart: boolean,
  minutes: number,
): Promise<Date> {
  const result = await tx.execute<{ reset_ms: string }>(
    sql`insert into rate_limit_hits (key, hits, reset_at)
          values (${key}, ${hits}, now() + make_interval(mins => ${minutes}))
        on conflict (key) do update set
          hits = excluded.hits,
          reset_at = case when ${restart} then excluded.reset_at else rate_limit_hits.reset_at end
        returning (extract(epoch from reset_at) * 1000)::text as reset_ms`,
  );
  return new Date(Number(result.rows[0]!.reset_ms));
}

/**
 * Counts one failure against the client and (for a client without the cookie) the account.
 * Returns the client's count and the lock this failure sets, if it sets one.
 */
export async function countFailure(
  tx: Transaction,
  state: ThrottleState,
): Promise<{ failuresFromClient: number; lock: Lock | null }> {
  const { rules, prefix, userId } = state;
  const pairHits = nextCount(state.pair, rules.threshold);
  const accountHits = state.client.kind === 'address' ? nextCount(state.account, accountLimit(rules)) : 0;
  const pairLocks = pairHits >= rules.threshold;
  const accountLocks = accountHits >= accountLimit(rules);
  if ((pairLocks || accountLocks) && !state.locksInForce) await forgetLiftedLocks(tx, state);

  const pairEnd = await writeCounter(
    tx,
    pairKey(state),
    pairHits,
    pairHits === 1 || pairLocks,
    rules.minutes,
  );
  const accountEnd =
    state.client.kind === 'address'
      ? await writeCounter(
          tx,
          accountKey(prefix, userId),
          accountHits,
          accountHits === 1 || accountLocks,
          rules.minutes,
        )
      : null;
  const lock: Lock | null = accountLocks
    ? { scope: 'account', until: accountEnd! }
    : pairLocks
      ? { scope: state.client.kind, until: pairEnd }
      : null;
  return { failuresFromClient: pairHits, lock };
}

/**
 * A new lock after an unlock or reset starts clean: the account's locks that were lifted (their
 * rows outlive the lifting) must not come back with it. Expired counters are pruned on the way.
 */
async function forgetLiftedLocks(tx: Transaction, state: ThrottleState) {
  const prefix = pairPrefix(state.prefix, state.userId);
  await tx.execute(
    sql`delete from rate_limit_hits
         where (left(key, ${prefix.length}) = ${prefix} and (hits >= ${state.rules.threshold} or reset_at <= now()))
            or (key = ${accountKey(state.prefix, state.userId)} and (hits >= ${accountLimit(state.rules)} or reset_at <= now()))`,
  );
}

/**
 * After a successful sign-in: the client's count starts again, and the end of the latest lock
 * still in force on other clients (or null) is what `users.locked_until` must keep.
 */
export async function clearAfterSuccess(tx: Transaction, state: ThrottleState): Promise<Date | null> {
  await tx.execute(sql`delete from rate_limit_hits where key = ${pairKey(state)}`);
  if (!state.locksInForce) return null;
  const prefix = pairPrefix(state.prefix, state.userId);
  const result = await tx.execute<{ end_ms: string | null }>(
    sql`select (extract(epoch from max(reset_at)) * 1000)::text as end_ms from rate_limit_hits
         where reset_at > now()
           and ((left(key, ${prefix.length}) = ${prefix} and hits >= ${state.rules.threshold})
             or (key = ${accountKey(state.prefix, state.userId)} and hits >= ${accountLimit(state.rules)}))`,
  );
  const end = result.rows[0]?.end_ms;
  return end ? new Date(Number(end)) : null;
}

/**
 * Claims the right to tell the owner and the administrators about a lock: once per account per
 * lockout period, so that a stranger cannot flood their mailboxes. True when this caller may send.
 */
export async function claimLockNotice(tx: Transaction, state: ThrottleState): Promise<boolean> {
  const result = await tx.execute<{ key: string }>(
    sql`insert into rate_limit_hits (key, hits, reset_at)
          values (${`${state.prefix}signin-notice:${state.userId}`}, 1, now() + make_interval(mins => ${state.rules.minutes}))
        on conflict (key) do update set hits = 1, reset_at = excluded.reset_at
          where rate_limit_hits.reset_at <= now()
        returning key`,
  );
  return result.rows.length > 0;
}
