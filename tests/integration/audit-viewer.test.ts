import { parse } from 'csv-parse/sync';
import { asc, eq, sql } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { checkAuditChain } from '../../server/features/audit-viewer/audit-viewer.ts';
import { auditEventHash } from '../../server/platform/audit/audit-hash.ts';
import { appendAuditEvent, verifyAuditChain } from '../../server/platform/audit/audit-trail.ts';
import type { SessionUser } from '../../server/platform/auth/roles.ts';
import { auditEvents, organisations } from '../../server/platform/db/schema/index.ts';
import { routeInventory } from '../support/route-inventory.ts';
import { openSuperuserDatabase } from '../support/superuser.ts';
import { createTestWorld, csrfFrom, signIn, type TestWorld } from '../support/test-app.ts';

let world: TestWorld;
let otherOrganisationEventId: number;
let noOrganisationEventId: number;
let formulaEventId: number;
const FORMULA_LABEL = '=HYPERLINK("http://evil.example","open")';
const AWKWARD_CONTEXT = { note: 'a,b "quoted"\r\nnext line', list: [1, null, { deep: true }] };

const signInAs = (who: string) => signIn(world.app, world.users[who]!.email, world.users[who]!.password);
const append = (input: Parameters<typeof appendAuditEvent>[1]) => appendAuditEvent(world.database.db, input);
const idsOnPage = (html: string) => [...html.matchAll(/id="event-(\d+)"/g)].map((match) => Number(match[1]));

/** The organisation's events straight from the table, oldest first: the oracle filters run on. */
const organisationEvents = () =>
  world.database.db
    .select()
    .from(auditEvents)
    .where(eq(auditEvents.organisationId, world.organisationId))
    .orderBy(asc(auditEvents.id));

beforeAll(async () => {
  world = await createTestWorld({ admin: ['admin'], reviewer: ['reviewer'], analyst: ['analyst'] });
  const analyst = world.users.analyst!;
  // Events of the real sign-in flow: a success, a wrong password, an unknown e-mail (no organisation).
  await signInAs('analyst');
  await signIn(world.app, analyst.email, 'not the password');
  const unknown = `nobody.${world.organisationId}@test.example`;
  await signIn(world.app, unknown, 'whatever');
  const [unknownEvent] = await world.database.db
    .select({ id: auditEvents.id })
    .from(auditEvents)
    .where(eq(auditEvents.actorLabel, unknown));
  noOrganisationEventId = unknownEvent!.id;

  const actor = { organisationId: world.organisationId, actorUserId: analyst.id, actorLabel: analyst.email };
  await append({
    ...actor,
    action: 'study.created',
    recordType: 'study',
    recordId: 42,
    after: { title: 'Old title', lowerLimit: 95, batches: ['ZX-01'] },
  });
  await append({
    ...actor,
    action: 'study.updated',
    recordType: 'study',
    recordId: 42,
    before: { title: 'Old title', batches: ['ZX-01'] },
    after: { title: 'New <b>title</b>', batches: ['ZX-01', 'ZX-02'] },
  });
  await append({
    ...actor,
    action: 'study.updated',
    recordType: 'study',
    recordId: 43,
    after: { unit: '%' },
  });
  formulaEventId = (
    await append({
      organisationId: world.organisationId,
      actorLabel: FORMULA_LABEL,
      action: 'test.formula',
      before: -5,
      after: '@SUM(A1:A9)',
      context: AWKWARD_CONTEXT,
    })
  ).id;
  for (let index = 0; index < 56; index += 1)
    await append({ ...actor, action: 'test.bulk', recordType: 'sample', recordId: index, after: { index } });

  const [other] = await world.database.db
    .insert(organisations)
    .values({ slug: `other-${world.organisationId}`, name: 'Another Laboratory (invented)' })
    .returning();
  otherOrganisationEventId = (
    await append({ organisationId: other!.id, actorLabel: 'someone@other.example', action: 'study.created' })
  ).id;
});
afterAll(() => world.close());

describe('who may read the audit trail', () => {
  it('every /audit route is declared for admin and reviewer, and an analyst gets 403 on each', async () => {
    const routes = routeInventory(world.app).filter((route) => route.path.startsWith('/audit'));
    expect(routes.map((route) => `${route.methods.join(',')} ${route.path}`).sort()).toEqual([
      'get /audit',
      'get /audit/chain',
      'get /audit/events/:eventId',
      'get /audit/export-checkpoints.json',
      'get /audit/export.csv',
      'post /audit/chain',
    ]);
    for (const route of routes) expect(route.policy).toEqual({ kind: 'roles', roles: ['admin', 'reviewer'] });

    const { agent } = await signInAs('analyst');
    const csrf = csrfFrom((await agent.get('/')).text);
    for (const path of ['/audit', '/audit/export.csv', `/audit/events/${formulaEventId}`, '/audit/chain'])
      expect((await agent.get(path)).status, path).toBe(403);
    expect((await agent.post('/audit/chain').type('form').send({ _csrf: csrf })).status).toBe(403);
    const checks = await world.database.db
      .select()
      .from(auditEvents)
      .where(eq(auditEvents.action, 'audit.chain-checked'));
    expect(checks.filter((event) => event.actorUserId === world.users.analyst!.id)).toEqual([]);
  });

  it('shows only the organisation’s own events, and says so', async () => {
    const { agent } = await signInAs('reviewer');
    const page = await agent.get('/audit?page=1');
    expect(page.status).toBe(200);
    expect(page.text).toContain('belong to no organisation');
    const all = (await agent.get('/audit/export.csv')).text;
    expect(all).not.toContain('someone@other.example');
    expect(all).not.toContain('nobody.');
    expect((await agent.get(`/audit/events/${otherOrganisationEventId}`)).status).toBe(404);
    expect((await agent.get(`/audit/events/${noOrganisationEventId}`)).status).toBe(404);
    expect((await agent.get(`/audit/events/${formulaEventId}`)).status).toBe(200);
  });
});

describe('filters', () => {
  it('by person, actor text, action and record return exactly the matching events, newest first', async () => {
    const { agent } = await signInAs('admin');
    const events = await organisationEvents();
    const expectIds = async (query: string, keep: (event: (typeof events)[number]) => boolean) => {
      const page = await agent.get(`/audit?${query}`);
      expect(page.status, query).toBe(200);
      const expected = events
        .filter(keep)
        .map((event) => event.id)
        .reverse()
        .slice(0, 50);
      expect(expected.length, query).toBeGreaterThan(0);
      expect(idsOnPage(page.text), query).toEqual(expected);
    };
    const analystId = world.users.analyst!.id;
    await expectIds(`user=${analystId}&action=`, (event) => event.actorUserId === analystId);
    await expectIds('actor=HYPERLINK', (event) => event.actorLabel === FORMULA_LABEL);
    await expectIds('action=sign-in.failed', (event) => event.action === 'sign-in.failed');
    await expectIds('action=study.updated', (event) => event.action === 'study.updated');
    await expectIds(
      'recordType=study&recordId=42',
      (event) => event.recordType === 'study' && event.recordId === '42',
    );
    await expectIds(
      `user=${analystId}&action=study.updated&recordId=43`,
      (event) =>
        event.actorUserId === analystId && event.action === 'study.updated' && event.recordId === '43',
    );
    // "%" and "_" in the actor text are literal characters, not wildcards.
    expect(idsOnPage((await agent.get('/audit?actor=%25')).text)).toEqual([]);
  });

  it('pages hold 50 events, newest first, without overlap', async () => {
    const { agent } = await signInAs('admin');
    const first = idsOnPage((await agent.get('/audit?action=test.bulk')).text);
    const second = idsOnPage((await agent.get('/audit?action=test.bulk&page=2')).text);
    expect(first).toHaveLength(50);
    expect(second).toHaveLength(6);
    const together = [...first, ...second];
    expect(together).toEqual([...together].sort((a, b) => b - a));
    expect(new Set(together).size).toBe(56);
    const beyond = await agent.get('/audit?action=test.bulk&page=9');
    expect(beyond.text).toContain('There is no page 9');
  });

  it('dates are days in the organisation’s time zone, both ends included', async () => {
    const [event] = await world.database.db
      .select()
      .from(auditEvents)
      .where(eq(auditEvents.id, formulaEventId));
    const instant = event!.occurredAt;
    // At any instant one of these zones (UTC−11, UTC+14; tz database) is on another calendar day
    // than UTC, so a filter read in UTC would give a different answer from one read in the zone.
    const zone = instant.getUTCHours() < 11 ? 'Pacific/Pago_Pago' : 'Pacific/Kiritimati';
    await world.database.db
      .update(organisations)
      .set({ timeZone: zone })
      .where(eq(organisations.id, world.organisationId));
    const day = (shiftDays: number) =>
      new Intl.DateTimeFormat('en-CA', {
        timeZone: zone,
        year: 'numeric',
        month: '2-digit',
        day: '2-digit',
      }).format(new Date(instant.getTime() + shiftDays * 86_400_000));
    const utcDay = instant.toISOString().slice(0, 10);
    expect(day(0)).not.toBe(utcDay);

    const { agent } = await signInAs('reviewer');
    const shows = async (query: string) =>
      idsOnPage((await agent.get(`/audit?action=test.formula&${query}`)).text).includes(formulaEventId);
    expect(await shows(`from=${day(0)}&to=${day(0)}`)).toBe(true);
    expect(await shows(`from=${day(0)}`)).toBe(true);
    expect(await shows(`to=${day(0)}`)).toBe(true);
    expect(await shows(`from=${utcDay}&to=${utcDay}`)).toBe(false);
    expect(await shows(`to=${day(-1)}`)).toBe(false);
    expect(await shows(`from=${day(1)}`)).toBe(false);
    const page = await agent.get(`/audit?action=test.formula`);
    expect(page.text).toContain(zone === 'Pacific/Kiritimati' ? 'UTC+14:00' : 'UTC-11:00');
    await world.database.db
      .update(organisations)
      .set({ timeZone: 'UTC' })
      .where(eq(organisations.id, world.organisationId));
  });

  it('a bad filter is refused with the message beside the field, never a 500', async () => {
    const { agent } = await signInAs('reviewer');
    const impossible = await agent.get('/audit?from=2025-02-30');
    expect(impossible.status).toBe(400);
    expect(impossible.text).toContain('must be a calendar date');
    const reversed = await agent.get('/audit?from=2025-03-10&to=2025-03-01');
    expect(reversed.status).toBe(400);
    expect(reversed.text).toContain('on or after the');
    expect((await agent.get('/audit?user=abc')).status).toBe(400);
    expect((await agent.get('/audit?action=a&action=b')).status).toBe(400);
    expect((await agent.get('/audit/export.csv?from=yesterday')).status).toBe(400);
  });
});

describe('the page shows each event readably', () => {
  it('before/after side by side, changed keys marked, values escaped, hashes abbreviated with the full one on hover', async () => {
    const { agent } = await signInAs('reviewer');
    const page = await agent.get('/audit?action=study.updated&recordId=42');
    const [event] = await world.database.db
      .select()
      .from(auditEvents)
      .where(
        sql`${auditEvents.organisationId} = ${world.organisationId} and ${auditEvents.action} = 'study.updated' and ${auditEvents.recordId} = '42'`,
      );
    expect(page.text).toContain('&quot;New &lt;b&gt;title&lt;/b&gt;&quot;');
    expect(page.text).not.toContain('<b>title</b>');
    expect(page.text).toMatch(/batches <span[^>]*>changed<\/span>/);
    expect(page.text).toContain(`title="${event!.hash}">${event!.hash.slice(0, 12)}…`);
    expect(page.text).toContain(`title="${event!.previousHash}"`);
  });
});

describe('CSV export', () => {
  it('holds every event of the organisation in chain order, parses back, and each row re-hashes to its hash', async () => {
    const { agent } = await signInAs('admin');
    const response = await agent.get('/audit/export.csv');
    expect(response.status).toBe(200);
    expect(response.headers['content-type']).toContain('text/csv');
    expect(response.headers['content-disposition']).toMatch(/attachment; filename="audit-trail-.+\.csv"/);
    expect(response.text).toContain('\r\n');
    const rows = parse(response.text, { columns: true }) as Record<string, string>[];

    const [exported] = await world.database.db
      .select()
      .from(auditEvents)
      .where(
        sql`${auditEvents.action} = 'audit.exported' and ${auditEvents.actorUserId} = ${world.users.admin!.id}`,
      )
      .orderBy(sql`${auditEvents.id} desc`)
      .limit(1);
    const upTo = (exported!.afterValue as { upToEventId: number }).upToEventId;
    const expected = (await organisationEvents()).filter((event) => event.id <= upTo);
    expect(rows.map((row) => Number(row.id))).toEqual(expected.map((event) => event.id));
    expect(rows.map((row) => row.action)).toContain('sign-in');
    expect(rows.map((row) => row.action)).toContain('sign-in.failed');

    // Formula-injection protection: the leading apostrophe (OWASP "CSV Injection").
    const unFormula = (cell: string) => (/^'[=+\-@\t\r]/.test(cell) ? cell.slice(1) : cell);
    const json = (cell: string) => (cell === '' ? null : JSON.parse(unFormula(cell)));
    const formula = rows.find((row) => Number(row.id) === formulaEventId)!;
    expect(formula.actor_label).toBe(`'${FORMULA_LABEL}`);
    expect(formula.before).toBe("'-5");
    expect(formula.after).toBe('"@SUM(A1:A9)"'); // JSON text of a string starts with a quote: inert
    expect(json(formula.context!)).toEqual(AWKWARD_CONTEXT);

    const updated = rows.find((row) => row.action === 'study.updated' && row.record_id === '42')!;
    expect(json(updated.before!)).toEqual({ title: 'Old title', batches: ['ZX-01'] });
    expect(json(updated.after!)).toEqual({ title: 'New <b>title</b>', batches: ['ZX-01', 'ZX-02'] });

    for (const row of rows) {
      expect(row.occurred_at).toMatch(/^\d{4}-\d{2}-\d{2}T\d{2}:\d{2}:\d{2}\.\d{6}Z$/);
      const recomputed = auditEventHash({
        previousHash: row.previous_hash!,
        occurredAt: row.occurred_at!,
        organisationId: row.organisation_id === '' ? null : Number(row.organisation_id),
        actorUserId: row.actor_user_id === '' ? null : Number(row.actor_user_id),
        actorLabel: unFormula(row.actor_label!),
        action: row.action!,
        recordType: row.record_type === '' ? null : row.record_type!,
        recordId: row.record_id === '' ? null : row.record_id!,
        beforeValue: json(row.before!),
        afterValue: json(row.after!),
        context: json(row.context!),
      });
      expect(recomputed, `event ${row.id}`).toBe(row.hash);
    }
  });

  it('a filtered export holds exactly the filter’s events', async () => {
    const { agent } = await signInAs('reviewer');
    const rows = parse((await agent.get('/audit/export.csv?action=study.updated')).text, {
      columns: true,
    }) as Record<string, string>[];
    const expected = (await organisationEvents()).filter((event) => event.action === 'study.updated');
    expect(rows.map((row) => Number(row.id))).toEqual(expected.map((event) => event.id));
  });
});

describe('chain check', () => {
  const reviewer = (): SessionUser => ({
    id: world.users.reviewer!.id,
    email: world.users.reviewer!.email,
    fullName: 'Test reviewer',
    organisationId: world.organisationId,
    organisationName: 'Test',
    roles: ['reviewer'],
  });

  it('passes from the page, and the check is recorded as an audit event with its outcome', async () => {
    const { agent } = await signInAs('reviewer');
    const form = await agent.get('/audit/chain');
    expect(form.status).toBe(200);
    const run = await agent
      .post('/audit/chain')
      .type('form')
      .send({ _csrf: csrfFrom(form.text) });
    expect(run.status).toBe(303);
    const eventId = Number(/check=(\d+)/.exec(run.headers.location ?? '')?.[1]);
    const result = await agent.get(run.headers.location!);
    expect(result.text).toContain('The chain is intact');
    const [recorded] = await world.database.db.select().from(auditEvents).where(eq(auditEvents.id, eventId));
    expect(recorded).toMatchObject({ action: 'audit.chain-checked', actorUserId: world.users.reviewer!.id });
    expect(recorded!.afterValue).toMatchObject({ ok: true });
    // Only this organisation's own events are counted (the chain itself is checked whole).
    const own = (await organisationEvents()).filter((event) => event.id < eventId).length;
    expect(own).toBeGreaterThan(60);
    expect((recorded!.afterValue as { eventsChecked: number }).eventsChecked).toBe(own);
  });

  it('fails at exactly the row tampered with as a superuser, inside a transaction rolled back afterwards', async () => {
    const { id: target } = await append({
      organisationId: world.organisationId,
      actorLabel: 'test',
      action: 'test.target',
      after: { amount: 10 },
    });
    await append({ organisationId: world.organisationId, actorLabel: 'test', action: 'test.after-target' });
    let outcome: Awaited<ReturnType<typeof checkAuditChain>> | undefined;
    let recorded: unknown;
    const superuser = await openSuperuserDatabase();
    await superuser.db
      .transaction(async (tx) => {
        // A superuser can switch triggers off for its session; the append-only trigger then no longer guards.
        await tx.execute(sql`set local session_replication_role = replica`);
        await tx.execute(
          sql`update audit_events set after_value = '{"amount": 99}'::jsonb where id = ${target}`,
        );
        outcome = await checkAuditChain(tx, reviewer(), { test: true });
        const [event] = await tx.select().from(auditEvents).where(eq(auditEvents.id, outcome.eventId));
        recorded = event?.afterValue;
        tx.rollback();
      })
      .catch(() => undefined) // drizzle signals the rollback by throwing
      .finally(() => superuser.close());
    expect(outcome?.ok).toBe(false);
    expect(outcome?.firstBrokenLink).toEqual({
      id: target,
      reason: 'content does not match its stored hash',
    });
    expect(recorded).toMatchObject({ ok: false, firstBrokenLink: { id: target } });
    expect((await verifyAuditChain(world.database.db)).ok).toBe(true);
  });

  it('the page shows a recorded broken outcome with a link to the event when it is the organisation’s', async () => {
    // A recorded outcome as the check writes it (the tampered state above was rolled back).
    const { id } = await append({
      organisationId: world.organisationId,
      actorUserId: world.users.admin!.id,
      actorLabel: world.users.admin!.email,
      action: 'audit.chain-checked',
      after: {
        ok: false,
        eventsChecked: 7,
        firstBrokenLink: { id: formulaEventId, reason: 'content does not match its stored hash' },
      },
    });
    const { agent } = await signInAs('admin');
    const page = await agent.get(`/audit/chain?check=${id}`);
    expect(page.text).toContain('The chain is broken');
    expect(page.text).toContain(`href="/audit/events/${formulaEventId}"`);
    expect(page.text).toContain('content does not match its stored hash');
  });
});
