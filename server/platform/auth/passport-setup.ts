import { setTimeout as sleep } from 'node:timers/promises';
import type { Request } from 'express';
import passport from 'passport';
import { Strategy as LocalStrategy } from 'passport-local';
import type { Database } from '../db/client.ts';
import { attemptSignIn, loadSessionUser } from './accounts.ts';
import { knownBrowserCookie } from './known-browser.ts';
import type { SessionUser } from './roles.ts';
import { loadedSessionUser, type SessionReference } from './session-store.ts';

declare global {
  namespace Express {
    interface User extends SessionUser {}
  }
}

/** The name of the e-mail and password strategy (`authenticator.authenticate(PASSWORD_STRATEGY, …)`). */
export const PASSWORD_STRATEGY = 'organisation-password';

/** Shown when the form arrives without an e-mail address or a password. */
export const MISSING_CREDENTIALS = 'Enter your e-mail address and your password.';

export type Authenticator = InstanceType<typeof passport.Passport>;

/**
 * Every refused sign-in is answered no sooner than this after the attempt began. The work of
 * the different refusals (unknown e-mail, wrong password, locked, deactivated) is alike but not
 * identical — a few database statements more or less beside one Argon2id verification of some
 * 7–10 ms — and a patient attacker can average out small differences; a floor well above the
 * slowest of them leaves nothing to measure. A successful sign-in is not held back.
 */
export const REFUSAL_FLOOR_MS = 250;

export interface AuthenticatorSettings {
  /** Signs the known-browser cookie (a key derived from it, `known-browser.ts`). */
  secret: string;
  cookieSecure: boolean;
  /** Separates the sign-in counters of app instances that must not share them (tests). */
  counterPrefix: string;
  refusalFloorMs?: number;
}

/**
 * Passport with one strategy, passport-local over `attemptSignIn` (which owns the per-client
 * locks, the uniform answer and the audit events of every attempt; 21 CFR 11.300(d), 11.10(e)).
 * A successful sign-in renews the known-browser cookie. The session keeps only {userId,
 * organisationId} and the user is reloaded with their roles on every request, so a deactivation
 * or role change takes effect at once: by the session store, in the statement that reads the
 * session row (`session-store.ts`), or here when the store did not.
 */
export function createAuthenticator(db: Database, settings: AuthenticatorSettings): Authenticator {
  const authenticator = new passport.Passport();
  const browsers = knownBrowserCookie({ secret: settings.secret, secure: settings.cookieSecure });
  const floorMs = settings.refusalFloorMs ?? REFUSAL_FLOOR_MS;
  authenticator.use(
    PASSWORD_STRATEGY,
    new LocalStrategy(
      { usernameField: 'email', passwordField: 'password', passReqToCallback: true },
      (req, email, password, done) => {
        const started = performance.now();
        const knownBrowser = browsers.read(req);
        attemptSignIn(
          db,
          email,
          password,
          { ip: req.ip, userAgent: req.get('user-agent'), knownBrowser },
          { counterPrefix: settings.counterPrefix },
        ).then(
          async (outcome) => {
            if (outcome.ok) {
              if (req.res) browsers.issue(req.res, outcome.user.id, knownBrowser);
              return done(null, outcome.user);
            }
            await sleep(Math.max(0, started + floorMs - performance.now()));
            done(null, false, { message: outcome.message });
          },
          (error) => done(error),
        );
      },
    ),
  );
  authenticator.serializeUser((user, done) => {
    const reference: SessionReference = { userId: user.id, organisationId: user.organisationId };
    done(null, reference);
  });
  // passport calls a three-argument deserializer with the request first.
  type Done = (error: unknown, user?: Express.User | false) => void;
  authenticator.deserializeUser((req: Request, reference: SessionReference, done: Done) => {
    const loaded = loadedSessionUser(req, reference);
    if (loaded !== undefined) return done(null, loaded ?? false);
    loadSessionUser(db, reference.userId, reference.organisationId).then(
      (user) => done(null, user ?? false),
      (error) => done(error),
    );
  });
  return authenticator;
}
