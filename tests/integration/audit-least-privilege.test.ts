import { randomBytes } from 'node:crypto';
import { sql } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { openRenderQueue, parseRenderConfig } from '../../server/features/reports/index.ts';
import { appendAuditEvent } from '../../server/platform/audit/audit-trail.ts';
import { grantAppRole, roleOf } from '../../server/platform/db/app-role-grants.ts';
import { type DatabaseHandle, openDatabase } from '../../server/platform/db/client.ts';
import { openSuperuserDatabase, superuserUrl } from '../support/superuser.ts';
import { createTestWorld, signIn } from '../support/test-app.ts';

/**
 * Least privilege (issue 14 §1): the role the app connects as owns nothing and holds only row
 * privileges, so even with the app's own credentials nobody can TRUNCATE, change a table, switch
 * a trigger off or set session_replication_role. The role here is made by the same grant step
 * the migrations run (`grantAppRole`); when DATABASE_URL itself is such a role (`npm test`), that
 * role is probed too. Write-once tables refuse TRUNCATE by trigger even for their owner.
 */

const WRITE_ONCE_TABLES = [
  'uploads',
  'datasets',
  'analysis_runs',
  'report_templates',
  'report_template_versions',
  'reports',
  'report_versions',
  'signatures',
  'signed_outputs',
  'review_assignments',
  'report_reviews',
  'invitations',
  'password_resets',
  'audit_events',
];

let superuser: DatabaseHandle;
let probeRole: string;
let probeUrl: string;
const roles: { name: string; url: string }[] = [];

beforeAll(async () => {
  superuser = await openSuperuserDatabase();
  probeRole = `rl_probe_${randomBytes(4).toString('hex')}`;
  await superuser.pool.query(`create role ${probeRole} login nosuperuser nocreatedb nocreaterole`);
  const url = new URL(superuserUrl());
  url.username = probeRole;
  url.password = '';
  probeUrl = url.toString();
  await grantAppRole(superuserUrl(), probeRole);
  roles.push({ name: probeRole, url: probeUrl });
  const appUrl = process.env.DATABASE_URL!;
  const configured = await superuser.pool.query<{ super: boolean }>(
    'select rolsuper as super from pg_roles where rolname = $1',
    [roleOf(appUrl)],
  );
  if (configured.rows[0]?.super === false) roles.push({ name: roleOf(appUrl), url: appUrl });
});
afterAll(async () => {
  // `drop owned` also removes the grants and default privileges given to the probe role.
  await superuser.pool.query(`drop owned by ${probeRole}`);
  await superuser.pool.query(`drop role ${probeRole}`);
  await superuser.close();
});

/** The error message of a statement that must fail (or a note that it succeeded). */
async function refusal(handle: DatabaseHandle, statement: string): Promise<string> {
  const client = await handle.pool.connect();
  try {
    await client.query('begin');
    await client.query(statement);
    return 'succeeded';
  } catch (error) {
    return (error as Error).message;
  } finally {
    await client.query('rollback').catch(() => undefined);
    client.release();
  }
}

describe('the app role', () => {
  it('is refused TRUNCATE, ALTER TABLE, DISABLE TRIGGER, SET session_replication_role, DDL and changing the audit trail', async () => {
    for (const role of roles) {
      const handle = openDatabase(role.url);
      try {
        for (const table of ['uploads', 'reports', 'signatures', 'audit_events', 'users'])
          expect(
            await refusal(handle, `truncate ${table} cascade`),
            `${role.name}: truncate ${table}`,
          ).toMatch(/permission denied for table/);
        expect(
          await refusal(handle, 'alter table audit_events disable trigger audit_events_no_update_delete'),
        ).toMatch(/must be owner of table audit_events/);
        expect(await refusal(handle, 'alter table audit_events disable trigger all')).toMatch(
          /must be owner/,
        );
        expect(await refusal(handle, 'alter table uploads add column smuggled text')).toMatch(
          /must be owner/,
        );
        expect(await refusal(handle, 'drop table datasets')).toMatch(/must be owner/);
        expect(await refusal(handle, 'set session_replication_role = replica')).toMatch(
          /permission denied to set parameter "session_replication_role"/,
        );
        expect(await refusal(handle, 'set local session_replication_role = replica')).toMatch(
          /permission denied/,
        );
        expect(await refusal(handle, 'create table smuggled (id int)')).toMatch(
          /permission denied for schema public/,
        );
        expect(await refusal(handle, 'create schema smuggled')).toMatch(/permission denied/);
        expect(await refusal(handle, "update audit_events set action = 'x' where id = 1")).toMatch(
          /permission denied for table audit_events/,
        );
        expect(await refusal(handle, 'delete from audit_events')).toMatch(
          /permission denied for table audit_events/,
        );
        expect(await refusal(handle, "select pg_read_file('postgresql.conf')")).toMatch(/permission denied/);
        const owns = await handle.pool.query(
          `select c.relname from pg_class c where c.relowner = (select oid from pg_roles where rolname = current_user)`,
        );
        expect(owns.rows).toEqual([]);
      } finally {
        await handle.close();
      }
    }
  });

  it('still runs the app: signs in, records audit events, starts the render queue without migrating', async () => {
    const world = await createTestWorld({ analyst: ['analyst'] }, { databaseUrl: probeUrl });
    try {
      const { response } = await signIn(world.app, world.users.analyst!.email, world.users.analyst!.password);
      expect(response.status).toBe(303);
      const { id } = await appendAuditEvent(world.database.db, {
        organisationId: world.organisationId,
        actorLabel: 'probe',
        action: 'test.least-privilege',
      });
      expect(id).toBeGreaterThan(0);
      const queue = openRenderQueue({
        config: parseRenderConfig(),
        pool: world.database.pool,
        supervise: false,
      });
      try {
        await queue.ready();
      } finally {
        await queue.close();
      }
    } finally {
      await world.close();
    }
  });
});

describe('write-once tables', () => {
  it('every table whose rows a trigger guards against UPDATE or DELETE has a TRUNCATE trigger too', async () => {
    // pg_trigger.tgtype bits (PostgreSQL's trigger.h): 1 row-level, 8 DELETE, 16 UPDATE, 32 TRUNCATE.
    const guarded = await superuser.pool.query<{ table: string; truncate: boolean }>(`
      select c.relname as table, bool_or(t.tgtype & 32 <> 0) as truncate
      from pg_trigger t join pg_class c on c.oid = t.tgrelid join pg_namespace n on n.oid = c.relnamespace
      where n.nspname = 'public' and not t.tgisinternal
      group by c.relname
      having bool_or(t.tgtype & 1 <> 0 and t.tgtype & 24 <> 0)`);
    expect(guarded.rows.map((row) => row.table)).toEqual(expect.arrayContaining(WRITE_ONCE_TABLES));
    expect(guarded.rows.filter((row) => !row.truncate)).toEqual([]);
  });

  it('refuse TRUNCATE (with CASCADE too) by trigger, even for a superuser, inside a rolled-back transaction', async () => {
    for (const table of WRITE_ONCE_TABLES) {
      const message = await refusal(superuser, `truncate ${table} cascade`);
      expect(message, table).toMatch(/TRUNCATE is not allowed|append-only/);
    }
    // A cascade from a table without its own trigger still reaches the write-once tables that refer to it.
    expect(await refusal(superuser, 'truncate organisations cascade')).toMatch(
      /TRUNCATE is not allowed|append-only/,
    );
    const still = await superuser.db.execute<{ n: string }>(sql`select count(*) as n from audit_events`);
    expect(Number(still.rows[0]!.n)).toBeGreaterThan(0);
  });
});
