import { drizzle, type NodePgDatabase } from 'drizzle-orm/node-postgres';
import pg from 'pg';
import { logger } from '../logging/logger.ts';
import * as schema from './schema/index.ts';

export type Database = NodePgDatabase<typeof schema>;
export type Transaction = Parameters<Parameters<Database['transaction']>[0]>[0];
/** Either the database or an open transaction: services accept both and pass `tx` down. */
export type Executor = Database | Transaction;

export interface DatabaseHandle {
  pool: pg.Pool;
  db: Database;
  close(): Promise<void>;
}

/** The one owner of the connection pool. */
export function openDatabase(connectionString: string): DatabaseHandle {
  const pool = new pg.Pool({ connectionString, max: 10 });
  // An idle client that loses its connection must not crash the process.
  pool.on('error', (error) => logger.error({ err: error }, 'idle database client error'));
  const db = drizzle(pool, { schema, casing: 'snake_case' });
  return { pool, db, close: () => pool.end() };
}
