import passport from 'passport';
import { Strategy as LocalStrategy } from 'passport-local';
import type { Database } from '../db/client.ts';
import { attemptSignIn, loadSessionUser } from './accounts.ts';
import type { SessionUser } from './roles.ts';

declare global {
  namespace Express {
    interface User extends SessionUser {}
  }
}

interface SessionReference {
  userId: number;
  organisationId: number;
}

/** The name of the e-mail and password strategy (`authenticator.authenticate(PASSWORD_STRATEGY, …)`). */
export const PASSWORD_STRATEGY = 'organisation-password';

/** Shown when the form arrives without an e-mail address or a password. */
export const MISSING_CREDENTIALS = 'Enter your e-mail address and your password.';

export type Authenticator = InstanceType<typeof passport.Passport>;

/**
 * Passport with one strategy, passport-local over `attemptSignIn` (which owns lockout, the
 * constant-time answer for unknown e-mails and the audit events of every attempt; 21 CFR 11.300(d)).
 * The session keeps only {userId, organisationId} and the user is reloaded with their roles on
 * every request, so a deactivation or role change takes effect at once.
 */
export function createAuthenticator(db: Database): Authenticator {
  const authenticator = new passport.Passport();
  authenticator.use(
    PASSWORD_STRATEGY,
    new LocalStrategy(
      { usernameField: 'email', passwordField: 'password', passReqToCallback: true },
      (req, email, password, done) => {
        attemptSignIn(db, email, password, { ip: req.ip, userAgent: req.get('user-agent') }).then(
          (outcome) =>
            outcome.ok ? done(null, outcome.user) : done(null, false, { message: outcome.message }),
          (error) => done(error),
        );
      },
    ),
  );
  authenticator.serializeUser((user, done) => {
    const reference: SessionReference = { userId: user.id, organisationId: user.organisationId };
    done(null, reference);
  });
  authenticator.deserializeUser((reference: SessionReference, done) => {
    loadSessionUser(db, reference.userId, reference.organisationId).then(
      (user) => done(null, user ?? false),
      (error) => done(error),
    );
  });
  return authenticator;
}
