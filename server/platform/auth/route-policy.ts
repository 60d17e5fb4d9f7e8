import type { NextFunction, Request, RequestHandler, Response } from 'express';
import { HttpError } from '../http/http-error.ts';
import type { Role } from './roles.ts';

/**
 * Who may call a route. Every route in the app is registered with one of these; a test walks the
 * router and fails on any route without a declared policy.
 */
export type RoutePolicy =
  | { kind: 'public' }
  | { kind: 'signed-in' }
  | { kind: 'roles'; roles: readonly Role[] };

export const POLICY_MARK = Symbol.for('rateledger.route-policy');

export type PolicyGuard = RequestHandler & { [POLICY_MARK]: RoutePolicy };

function mark(policy: RoutePolicy, handler: RequestHandler): PolicyGuard {
  return Object.assign(handler, { [POLICY_MARK]: policy });
}

/** Anyone, signed in or not (sign-in page, health check). */
export const publicRoute = (): PolicyGuard => mark({ kind: 'public' }, (_req, _res, next) => next());

/** Any signed-in member of the organisation, whatever the role. */
export const signedIn = (): PolicyGuard =>
  mark({ kind: 'signed-in' }, (req, res, next) => {
    if (req.user) return next();
    refuseAnonymous(req, res, next);
  });

/** A signed-in member holding at least one of the roles in the current organisation. */
export const requireRole = (...roles: Role[]): PolicyGuard =>
  mark({ kind: 'roles', roles }, (req, res, next) => {
    if (!req.user) return refuseAnonymous(req, res, next);
    if (req.user.roles.some((role) => roles.includes(role))) return next();
    next(new HttpError(403, `This needs the ${roles.join(' or ')} role.`));
  });

function refuseAnonymous(req: Request, res: Response, next: NextFunction) {
  if (req.originalUrl.startsWith('/api/')) return next(new HttpError(401, 'Sign in first.'));
  res.redirect(303, `/signin?next=${encodeURIComponent(req.originalUrl)}`);
}
