import { and, eq } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { auditEvents, invitations } from '../../server/platform/db/schema/index.ts';
import { startTestSmtp, type TestSmtp } from '../support/smtp.ts';
import { createTestWorld, csrfFrom, signIn, type TestWorld } from '../support/test-app.ts';

/**
 * Issue 13 §6, least privilege by default: the invitation form ticks no role; sending it with
 * none is refused beside the roles; granting reviewer (a signing role) needs the admin's explicit
 * confirmation, which the audit event records; analyst alone needs none and gives analyst alone.
 */

let world: TestWorld;
let smtp: TestSmtp;
let admin: Awaited<ReturnType<typeof signIn>>['agent'];
let token: string;

beforeAll(async () => {
  world = await createTestWorld({ admin: ['admin'] });
  smtp = await startTestSmtp(world.database.db);
  admin = (await signIn(world.app, world.users.admin!.email, world.users.admin!.password)).agent;
  token = csrfFrom((await admin.get('/admin/people/invite')).text);
});

afterAll(async () => {
  await smtp?.close();
  await world?.close();
});

const invite = (fields: Record<string, string | string[]>) =>
  admin
    .post('/admin/people/invite')
    .type('form')
    .send({ _csrf: token, ...fields });

const invitationsFor = (email: string) =>
  world.database.db
    .select()
    .from(invitations)
    .where(and(eq(invitations.organisationId, world.organisationId), eq(invitations.email, email)));

describe('the invitation form grants nothing by default', () => {
  it('ticks no role', async () => {
    const page = await admin.get('/admin/people/invite').expect(200);
    const boxes = page.text.match(/<input type="checkbox" name="roles"[^>]*>/g) ?? [];
    expect(boxes).toHaveLength(3);
    for (const box of boxes) expect(box).not.toContain('checked');
    expect(page.text).not.toMatch(/name="confirmSigningRole"[^>]* checked/);
  });

  it('refuses no role with a message beside the roles, and records nothing', async () => {
    const email = `none.${Date.now()}@test.example`;
    const response = await invite({ fullName: 'No Role', email });
    expect(response.status).toBe(400);
    expect(response.text).toContain('id="roles-error"');
    expect(response.text).toContain('Choose at least one role.');
    expect(await invitationsFor(email)).toEqual([]);
  });

  it('analyst alone gives analyst alone, without a signing confirmation', async () => {
    const email = `analyst.${Date.now()}@test.example`;
    const response = await invite({ fullName: 'Ana Lyst', email, roles: 'analyst' });
    expect(response.status).toBe(303);
    expect((await invitationsFor(email)).map((row) => row.roles)).toEqual([['analyst']]);
  });

  it('reviewer without the confirmation is refused beside it, keeps what was typed and records nothing', async () => {
    const email = `reviewer.${Date.now()}@test.example`;
    const response = await invite({ fullName: 'Rhea Viewer', email, roles: ['analyst', 'reviewer'] });
    expect(response.status).toBe(400);
    expect(response.text).toContain('id="confirmSigningRole-error"');
    expect(response.text).toContain('Reviewer is a signing role');
    expect(response.text).toMatch(/name="roles" value="reviewer" checked/);
    expect(response.text).toContain(`value="${email}"`);
    expect(await invitationsFor(email)).toEqual([]);
  });

  it('reviewer with the confirmation is sent, and the audit event says it was confirmed', async () => {
    const email = `signer.${Date.now()}@test.example`;
    const response = await invite({
      fullName: 'Sig Ner',
      email,
      roles: 'reviewer',
      confirmSigningRole: 'yes',
    });
    expect(response.status).toBe(303);
    const [row] = await invitationsFor(email);
    expect(row!.roles).toEqual(['reviewer']);
    const [event] = await world.database.db
      .select()
      .from(auditEvents)
      .where(and(eq(auditEvents.action, 'user.invited'), eq(auditEvents.recordId, String(row!.id))));
    expect(event?.afterValue).toMatchObject({ email, roles: ['reviewer'], signingRoleConfirmed: true });
  });
});
