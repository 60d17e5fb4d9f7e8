import type pg from 'pg';
import type { Authenticator } from './auth/passport-setup.ts';
import type { RenderConfig } from './config/render-config.ts';
import type { Database } from './db/client.ts';
import type { ReportStorage } from './storage/report-storage.ts';

export interface AppOptions {
  sessionSecret: string;
  cookieSecure: boolean;
  cookieName: string;
  signInRateLimit: number;
  /** Separates rate-limit counters of app instances that must not share them (tests). */
  rateLimitPrefix: string;
  /** Minutes of inactivity after which a session ends (EU GMP Annex 11 §12.1: idle lock). */
  idleMinutes: number;
}

/**
 * What route modules need from the running app, built once in `createApp`: the database, the app's
 * options, the render settings, the store of rendered PDFs and the authenticator. No route builds its own.
 */
export interface AppServices {
  db: Database;
  pool: pg.Pool;
  options: AppOptions;
  renderConfig: RenderConfig;
  storage: ReportStorage;
  /** Passport with the sign-in strategy; `initialize` and `session` are mounted by `createApp`. */
  authenticator: Authenticator;
}
