import { defineConfig } from 'drizzle-kit';

// Migrations are generated from server/platform/db/schema and committed in drizzle/; `npm start` and
// `npm test` apply them with server/platform/db/migrate.ts. The URL is needed only by drizzle-kit commands
// that talk to a database (generate does not).
export default defineConfig({
  dialect: 'postgresql',
  schema: './server/platform/db/schema/index.ts',
  out: './drizzle',
  casing: 'snake_case',
  dbCredentials: { url: process.env.DATABASE_URL ?? 'postgres://postgres@127.0.0.1:54329/rateledger' },
});
