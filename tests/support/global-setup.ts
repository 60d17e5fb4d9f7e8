import { applyMigrations } from '../../server/platform/db/migrate.ts';

/**
 * Runs once before the integration and browser projects: the throwaway database that
 * `npm test` created gets the committed migrations, exactly as `npm start` applies them.
 */
export default async function setup() {
  const url = process.env.DATABASE_URL;
  if (!url) throw new Error('DATABASE_URL is not set: run the integration tests through `npm test`.');
  await applyMigrations(url);
}
