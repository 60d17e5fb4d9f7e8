import { fileURLToPath } from 'node:url';
import { migrate } from 'drizzle-orm/node-postgres/migrator';
import { projectPath } from '../config/project-root.ts';
import { openDatabase } from './client.ts';

const migrationsFolder = projectPath('drizzle');

/** Applies the committed drizzle migrations; already applied ones are skipped. */
export async function applyMigrations(connectionString: string): Promise<void> {
  const handle = openDatabase(connectionString);
  try {
    await migrate(handle.db, { migrationsFolder });
  } finally {
    await handle.close();
  }
}

if (process.argv[1] === fileURLToPath(import.meta.url)) {
  const url = process.env.DATABASE_URL;
  if (!url) {
    console.error('DATABASE_URL is not set');
    process.exit(1);
  }
  await applyMigrations(url);
  console.log('[rateledger] migrations applied');
}
