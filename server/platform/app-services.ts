import type pg from 'pg';
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
 * options, the render settings and the store of rendered PDFs. No route builds its own.
 */
export interface AppServices {
  db: Database;
  pool: pg.Pool;
  options: AppOptions;
  renderConfig: RenderConfig;
  storage: ReportStorage;
}
