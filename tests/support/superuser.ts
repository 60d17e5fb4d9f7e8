import { type DatabaseHandle, openDatabase } from '../../server/platform/db/client.ts';

/**
 * A connection as a database superuser, for tests that attack the database the way its
 * administrator could. `npm test` gives it as TEST_SUPERUSER_URL (the app's DATABASE_URL is then
 * the least-privileged app role); with only DATABASE_URL set, that URL is assumed to be one.
 */
export function superuserUrl(): string {
  return process.env.TEST_SUPERUSER_URL || process.env.DATABASE_URL!;
}

export async function openSuperuserDatabase(): Promise<DatabaseHandle> {
  const handle = openDatabase(superuserUrl());
  const { rows } = await handle.pool.query<{ super: boolean }>(
    'select rolsuper as super from pg_roles where rolname = current_user',
  );
  if (!rows[0]?.super) {
    await handle.close();
    throw new Error('these tests need a superuser connection: set TEST_SUPERUSER_URL');
  }
  return handle;
}
