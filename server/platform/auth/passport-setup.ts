import passport from 'passport';
import type { Database } from '../db/client.ts';
import { loadSessionUser } from './accounts.ts';
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

/**
 * Passport keeps only {userId, organisationId} in the session and reloads the user with their
 * roles on every request, so a deactivation or role change takes effect at once. Credentials are
 * checked by `attemptSignIn` (which owns lockout and auditing) before `req.login` is called.
 */
export function createAuthenticator(db: Database) {
  const authenticator = new passport.Passport();
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
