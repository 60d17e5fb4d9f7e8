import pg from 'pg';

/**
 * Least privilege for the role the app connects as (DATABASE_URL). The owner role
 * (DATABASE_OWNER_URL) owns every table, runs the migrations and installs pg-boss; the app role
 * owns nothing and gets only what the running app does with the rows:
 * - SELECT, INSERT, UPDATE, DELETE on the application's tables, except `audit_events`: SELECT and
 *   INSERT only. Write-once tables refuse UPDATE/DELETE/TRUNCATE by trigger as well.
 * - No TRUNCATE, REFERENCES or TRIGGER privilege; no DDL (it owns nothing and may not CREATE in
 *   the schemas), so it cannot ALTER a table or DISABLE a trigger; and, not being a superuser, it
 *   cannot SET session_replication_role (a superuser-only setting in PostgreSQL 15 unless GRANT SET
 *   gives it, which this never does).
 * - On pg-boss's schema: the rows of its tables and its functions, and the same on the job
 *   partitions the owner creates for new queues later (ALTER DEFAULT PRIVILEGES).
 * Re-run after every migration (idempotent), so new tables are granted too.
 */

export const PGBOSS_SCHEMA_NAME = 'pgboss';

/** The role name in a postgres:// URL. */
export const roleOf = (url: string) => decodeURIComponent(new URL(url).username || 'postgres');

export async function grantAppRole(ownerUrl: string, appRole: string): Promise<void> {
  const client = new pg.Client({ connectionString: ownerUrl });
  await client.connect();
  try {
    const role = client.escapeIdentifier(appRole);
    const owner = (await client.query<{ owner: string }>('select current_user as owner')).rows[0]!.owner;
    const database = (await client.query<{ name: string }>('select current_database() as name')).rows[0]!
      .name;
    const statements = [
      `grant connect on database ${client.escapeIdentifier(database)} to ${role}`,
      `revoke create on schema public from public`,
      `revoke all on schema public from ${role}`,
      `grant usage on schema public to ${role}`,
      `revoke all on all tables in schema public from ${role}`,
      `grant select, insert, update, delete on all tables in schema public to ${role}`,
      `revoke update, delete on audit_events from ${role}`,
      `grant usage, select on all sequences in schema public to ${role}`,
      `alter default privileges for role ${client.escapeIdentifier(owner)} in schema public grant select, insert, update, delete on tables to ${role}`,
      `alter default privileges for role ${client.escapeIdentifier(owner)} in schema public grant usage, select on sequences to ${role}`,
      `grant usage on schema ${PGBOSS_SCHEMA_NAME} to ${role}`,
      `revoke all on all tables in schema ${PGBOSS_SCHEMA_NAME} from ${role}`,
      `grant select, insert, update, delete on all tables in schema ${PGBOSS_SCHEMA_NAME} to ${role}`,
      `grant usage, select on all sequences in schema ${PGBOSS_SCHEMA_NAME} to ${role}`,
      `grant execute on all functions in schema ${PGBOSS_SCHEMA_NAME} to ${role}`,
      `alter default privileges for role ${client.escapeIdentifier(owner)} in schema ${PGBOSS_SCHEMA_NAME} grant select, insert, update, delete on tables to ${role}`,
    ];
    await client.query('begin');
    for (const statement of statements) await client.query(statement);
    await client.query('commit');
  } catch (error) {
    await client.query('rollback').catch(() => undefined);
    throw error;
  } finally {
    await client.end();
  }
}
