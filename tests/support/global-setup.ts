import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { migrateDatabase } from '../../server/migrate-database.ts';

/**
 * Runs once before the integration and browser projects: the throwaway database that
 * `npm test` created gets the committed migrations and pg-boss's schema and queues, exactly as
 * `npm start` applies them — as the owner role (DATABASE_OWNER_URL) when one is given, granting
 * the app role of DATABASE_URL what it needs; otherwise as DATABASE_URL itself.
 *
 * The audit checkpoints of a test run go to a fresh folder (unless AUDIT_ANCHOR_DIR is set), so
 * a run never compares its database with checkpoints of another run's database. The test
 * workers start after this and inherit the variable.
 */
export default async function setup() {
  const url = process.env.DATABASE_URL;
  if (!url) throw new Error('DATABASE_URL is not set: run the integration tests through `npm test`.');
  const ownFolder = process.env.AUDIT_ANCHOR_DIR
    ? null
    : mkdtempSync(path.join(tmpdir(), 'rateledger-test-anchor-'));
  if (ownFolder) process.env.AUDIT_ANCHOR_DIR = ownFolder;
  await migrateDatabase({ appUrl: url, ownerUrl: process.env.DATABASE_OWNER_URL || url });
  return () => {
    if (ownFolder) rmSync(ownFolder, { recursive: true, force: true });
  };
}
