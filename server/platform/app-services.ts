import type pg from 'pg';
import type { Database } from './db/client.ts';

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

/** What route modules need from the running app: the database and the app's options. */
export interface AppServices {
  db: Database;
  pool: pg.Pool;
  options: AppOptions;
}
