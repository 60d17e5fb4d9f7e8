import { fileURLToPath } from 'node:url';
import { z } from 'zod';
import { installChainCheckQueue } from './features/audit-viewer/index.ts';
import { openRenderQueue, parseRenderConfig } from './features/reports/index.ts';
import { grantAppRole, roleOf } from './platform/db/app-role-grants.ts';
import { applyMigrations } from './platform/db/migrate.ts';

/**
 * The migration step of `npm start` and of the test setup, run as the owner role: the committed
 * drizzle migrations, then pg-boss's schema, the render queues and the audit chain-check queue
 * (the app's pg-boss starts with `migrate: false` and creates nothing), then the app role's
 * grants when the app connects as another role than the owner. With only DATABASE_URL set the
 * owner is that same role (a development database), and nothing is granted.
 */
export async function migrateDatabase({ appUrl, ownerUrl }: { appUrl: string; ownerUrl: string }) {
  await applyMigrations(ownerUrl);
  const queue = openRenderQueue({
    config: parseRenderConfig(),
    connectionString: ownerUrl,
    supervise: false,
    migrate: true,
  });
  try {
    await queue.ready();
  } finally {
    await queue.close();
  }
  await installChainCheckQueue(ownerUrl);
  if (roleOf(appUrl) !== roleOf(ownerUrl)) await grantAppRole(ownerUrl, roleOf(appUrl));
}

if (process.argv[1] === fileURLToPath(import.meta.url)) {
  const url = z.url().safeParse(process.env.DATABASE_URL);
  if (!url.success) {
    console.error('DATABASE_URL is not set (or not a postgres:// URL)');
    process.exit(1);
  }
  await migrateDatabase({ appUrl: url.data, ownerUrl: process.env.DATABASE_OWNER_URL || url.data });
  console.log('[rateledger] migrations applied');
}
