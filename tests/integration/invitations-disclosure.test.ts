import { and, desc, eq } from 'drizzle-orm';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { auditEvents, users } from '../../server/platform/db/schema/index.ts';
import { startTestSmtp, type TestSmtp } from '../support/smtp.ts';
import { createTestWorld, csrfFrom, signIn, type TestWorld } from '../support/test-app.ts';

/**
 * An administrator must not learn through an invitation which addresses already have a
 * Rateledger account in another organisation (issue 14 §2): inviting a fresh address, an address
 * with an account elsewhere and one whose account elsewhere is deactivated gives the same
 * answer, the same notice, the same message and the same audit record.
 */

let world: TestWorld;
let other: TestWorld;
let smtp: TestSmtp;
let admin: Awaited<ReturnType<typeof signIn>>['agent'];
let token: string;

beforeAll(async () => {
  world = await createTestWorld({ admin: ['admin'] });
  other = await createTestWorld({ elsewhere: ['analyst'], retired: ['analyst'] });
  await other.database.db.update(users).set({ active: false }).where(eq(users.id, other.users.retired!.id));
  smtp = await startTestSmtp(world.database.db);
  admin = (await signIn(world.app, world.users.admin!.email, world.users.admin!.password)).agent;
  token = csrfFrom((await admin.get('/admin/people/invite')).text);
});
afterAll(async () => {
  await smtp?.close();
  await other?.close();
  await world?.close();
});

async function inviteAndRead(email: string) {
  const response = await admin
    .post('/admin/people/invite')
    .type('form')
    .send({ _csrf: token, fullName: 'Invited Person', email, roles: 'reviewer', confirmSigningRole: 'yes' });
  const page = await admin.get('/admin/people');
  const notice = /role="(?:status|alert)"[^>]*>([^<]+)</.exec(page.text)?.[1] ?? '';
  const [event] = await world.database.db
    .select()
    .from(auditEvents)
    .where(and(eq(auditEvents.organisationId, world.organisationId), eq(auditEvents.action, 'user.invited')))
    .orderBy(desc(auditEvents.id))
    .limit(1);
  const mail = await smtp.waitForMailTo(email);
  const recorded = { ...(event!.afterValue as Record<string, unknown>) };
  delete recorded.expiresAt;
  return {
    status: response.status,
    notice: notice.replaceAll(email, 'ADDRESS'),
    recorded: { ...recorded, email: 'ADDRESS' },
    subject: mail.subject,
    body: mail.textBody
      .replace(/\/invitations\/[A-Za-z0-9_-]{43}/, '/invitations/TOKEN')
      .replace(/until .*\./, ''),
  };
}

describe('inviting an address', () => {
  it('says the same whether it is new, has an account elsewhere, or a deactivated one', async () => {
    const fresh = await inviteAndRead(`fresh.${Date.now()}@test.example`);
    const elsewhere = await inviteAndRead(other.users.elsewhere!.email);
    const retired = await inviteAndRead(other.users.retired!.email);
    expect(fresh.status).toBe(303);
    expect(fresh.notice).toContain('Invitation for Invited Person &lt;ADDRESS&gt; recorded.');
    expect(elsewhere).toEqual(fresh);
    expect(retired).toEqual(fresh);
    expect(Object.keys(fresh.recorded)).not.toContain('existingAccount');
  });
});
