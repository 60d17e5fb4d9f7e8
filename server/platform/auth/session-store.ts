import connectPgSimple from 'connect-pg-simple';
import type { Request } from 'express';
import type session from 'express-session';
import type { Session, SessionData } from 'express-session';
import type pg from 'pg';
import type { Role, SessionUser } from './roles.ts';

/** What the session keeps of the signed-in person (`passport-setup.ts` writes it). */
export interface SessionReference {
  userId: number;
  organisationId: number;
}

/** A session row as read, with its signed-in person loaded by the same statement. */
interface SessionRead {
  /** The row's `passport.user` (the very object passport hands to `deserializeUser`), if any. */
  reference: unknown;
  /** The person with their roles, or null when no longer allowed in (`loadSessionUser`'s rule). */
  user: SessionUser | null;
  /** The row's `expire` as stored, in ms since the epoch. */
  expireMs: number;
}

/**
 * The longest a session row's expiry may lag behind the last request before it is rewritten:
 * `min(60 s, idle timeout / 10)` — 60 s for the 30-minute idle sign-out.
 */
export function touchSlackMs(idleMs: number): number {
  return Math.min(60_000, idleMs / 10);
}

/**
 * One PostgreSQL statement per signed-in request instead of three. connect-pg-simple reads the
 * session row, passport's `deserializeUser` then reloads the user with their roles, and the
 * rolling expiry rewrites the row when the response ends. Here:
 *
 * - `get` reads the row and, in the same statement, the user, their organisation and their roles
 *   in it (the rule of `loadSessionUser`: active, and a member there), so a deactivation or a
 *   role change still takes effect at the person's next request. The result is kept beside the
 *   request's session object (a WeakMap, so nothing outlives the request and nothing of it is
 *   stored in the row) for `deserializeUser` to take (`loadedSessionUser`).
 * - `touch` rewrites the row's expiry only when that moves it by at least `touchSlackMs` (60 s for
 *   the 30-minute timeout). Otherwise the stored expiry stands, so the idle sign-out comes after
 *   between (timeout − slack) and timeout without a request — 29 to 30 minutes — never later.
 *   Changed session data is still written at once (`set`, unchanged), and the cookie still rolls.
 *
 * Everything else (writes, destroy, pruning of expired rows) is connect-pg-simple's; its pruning
 * timer starts at its first own call, here the first write (a sign-in or an expiry rewrite).
 * What this relies on in express-session 1.x: the object `get` returns is handed to
 * `store.createSession(req, data)` (`inflate`), whose Session copies `passport` by reference, and
 * `touch` gets that Session. `tests/integration/session-reads.test.ts` counts the statements of
 * a signed-in read, so a release that changes this fails there; the app would then only be
 * slower (the user loaded by `deserializeUser`, the row rewritten each request), never wrong.
 */
export function createSessionStore(
  sessionModule: typeof session,
  pool: pg.Pool,
  options: { fastPath: boolean },
): session.Store {
  const PgStore = connectPgSimple(sessionModule);
  const storeOptions = { pool, tableName: 'session', createTableIfMissing: false };
  if (!options.fastPath) return new PgStore(storeOptions);

  class SignedInSessionStore extends PgStore {
    override get(sid: string, callback: (err: unknown, session?: SessionData | null) => void): void {
      pool
        .query<SessionRow>({
          name: READ_STATEMENT,
          text: READ_SQL,
          values: [sid, Math.ceil(Date.now() / 1000)],
        })
        .then(
          (result) => {
            const row = result.rows[0];
            if (!row) return callback(null, null);
            // Not an object: unreadable, and connect-pg-simple destroys such a row too.
            if (typeof row.sess !== 'object' || row.sess === null) return this.destroy(sid, callback);
            reads.set(row.sess, {
              reference: row.sess.passport?.user,
              user: sessionUserOf(row),
              expireMs: row.expire.getTime(),
            });
            callback(null, row.sess);
          },
          (error: unknown) => callback(error),
        );
    }

    override createSession(req: Request, data: SessionData): Session & SessionData {
      const read = reads.get(data);
      const created = super.createSession(req, data);
      if (read) reads.set(created, read);
      return created;
    }

    override touch(sid: string, data: SessionData, callback?: () => void): void {
      const read = reads.get(data);
      const maxAge = data.cookie.originalMaxAge;
      const expires = data.cookie.expires;
      // The rewrite would set the expiry to `expires` (connect-pg-simple rounds up to the second).
      if (read && maxAge && expires) {
        const newExpireMs = Math.ceil(expires.getTime() / 1000) * 1000;
        if (newExpireMs - read.expireMs < touchSlackMs(maxAge)) {
          callback?.();
          return;
        }
      }
      super.touch(sid, data, callback);
    }
  }
  return new SignedInSessionStore(storeOptions);
}

/**
 * The signed-in person the session store loaded with this request's session row, when
 * `reference` is the very `passport.user` object of that row (the session object keeps it by
 * reference): the user, or null when no longer allowed in — also when the row names nobody valid.
 * Undefined otherwise (a plain store, or a session passport replaced since): the caller loads
 * the user itself.
 */
export function loadedSessionUser(req: Request, reference: unknown): SessionUser | null | undefined {
  const read = req.session ? reads.get(req.session) : undefined;
  return read && read.reference !== undefined && read.reference === reference ? read.user : undefined;
}

const reads = new WeakMap<object, SessionRead>();

interface SessionRow {
  sess: SessionData & { passport?: { user?: unknown } };
  expire: Date;
  id: number | null;
  email: string | null;
  full_name: string | null;
  active: boolean | null;
  organisation_id: number | null;
  organisation_name: string | null;
  roles: Role[] | null;
}

const READ_STATEMENT = 'rateledger.session-with-user';
/** An id as the session stores it; anything else matches nobody (and casts no error). */
const idAt = (field: string) =>
  `case when s.sess #>> '{passport,user,${field}}' ~ '^[0-9]{1,9}$' then (s.sess #>> '{passport,user,${field}}')::integer end`;
/**
 * connect-pg-simple's `get` (same condition on `expire`) joined to `loadSessionUser`'s rows.
 * `expire` has no time zone and connect-pg-simple writes it through `to_timestamp` in the
 * connection's zone; the cast back reads it in that same zone. Roles come in the enum's order
 * (analyst, reviewer, admin). `$2` is connect-pg-simple's clock: the app's, in whole seconds.
 */
const READ_SQL = `
  select s.sess, s.expire::timestamptz as expire, u.id, u.email, u.full_name, u.active,
    o.id as organisation_id, o.name as organisation_name,
    array(
      select m.role::text from memberships m
      where m.user_id = u.id and m.organisation_id = o.id order by m.role
    ) as roles
  from "session" s
  left join users u on u.id = ${idAt('userId')}
  left join organisations o on o.id = ${idAt('organisationId')}
  where s.sid = $1 and s.expire >= to_timestamp($2)`;

function sessionUserOf(row: SessionRow): SessionUser | null {
  if (row.id === null || row.organisation_id === null || !row.active) return null;
  if (!row.roles || row.roles.length === 0) return null;
  return {
    id: row.id,
    email: row.email!,
    fullName: row.full_name!,
    organisationId: row.organisation_id,
    organisationName: row.organisation_name!,
    roles: row.roles,
  };
}
