import type { Request, Response } from 'express';

declare module 'express-session' {
  interface SessionData {
    /** One message for the next admin page shown (after a redirect). */
    adminNotice?: { kind: 'done' | 'error'; text: string };
  }
}

/** The notice left by the last action, shown once. */
export function takeNotice(req: Request) {
  const notice = req.session.adminNotice;
  delete req.session.adminNotice;
  return notice;
}

/** Leaves a notice for the next page and redirects there (303, after the session is saved). */
export function noticeAndBack(
  req: Request,
  res: Response,
  path: string,
  kind: 'done' | 'error',
  text: string,
) {
  req.session.adminNotice = { kind, text };
  req.session.save(() => res.redirect(303, path));
}
