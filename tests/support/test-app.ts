import { randomBytes } from 'node:crypto';
import type { Express } from 'express';
import request from 'supertest';
import { type CreateAppOptions, createApp } from '../../server/app.ts';
import type { AppOptions } from '../../server/platform/app-services.ts';
import { hashPassword } from '../../server/platform/auth/passwords.ts';
import type { Role } from '../../server/platform/auth/roles.ts';
import { type DatabaseHandle, openDatabase } from '../../server/platform/db/client.ts';
import { memberships, organisations, users } from '../../server/platform/db/schema/index.ts';

export interface TestUser {
  id: number;
  email: string;
  password: string;
  roles: Role[];
}

export interface TestWorld {
  database: DatabaseHandle;
  app: Express;
  organisationId: number;
  users: Record<string, TestUser>;
  close(): Promise<void>;
}

/**
 * A real app on the real test database with a fresh organisation and users whose e-mails are
 * unique to this test file, so files never see each other's rows.
 */
export async function createTestWorld(
  people: Record<string, Role[]>,
  options: Partial<AppOptions> &
    Omit<CreateAppOptions, 'sessionSecret'> & {
      lockoutThreshold?: number;
      /** Another database than the test database (e.g. a throwaway cluster a test stops). */
      databaseUrl?: string;
    } = {},
): Promise<TestWorld> {
  const database = openDatabase(options.databaseUrl ?? process.env.DATABASE_URL!);
  const tag = randomBytes(4).toString('hex');
  const [organisation] = await database.db
    .insert(organisations)
    .values({
      slug: `test-${tag}`,
      name: `Test Laboratory ${tag}`,
      lockoutThreshold: options.lockoutThreshold ?? 5,
    })
    .returning();
  const created: Record<string, TestUser> = {};
  for (const [name, roles] of Object.entries(people)) {
    const password = `pw-${name}-${tag}`;
    const email = `${name}.${tag}@test.example`;
    const [user] = await database.db
      .insert(users)
      .values({ email, fullName: `Test ${name}`, passwordHash: await hashPassword(password) })
      .returning();
    for (const role of roles)
      await database.db
        .insert(memberships)
        .values({ userId: user!.id, organisationId: organisation!.id, role });
    created[name] = { id: user!.id, email, password, roles };
  }
  const { lockoutThreshold: _ignored, databaseUrl: _database, ...appOptions } = options;
  const app = createApp(database, {
    sessionSecret: 'test-secret-for-this-file-only',
    rateLimitPrefix: `${tag}:`,
    ...appOptions,
  });
  return { database, app, organisationId: organisation!.id, users: created, close: () => database.close() };
}

/** The CSRF token embedded in a server-rendered page. */
export function csrfFrom(html: string): string {
  const match = /name="_csrf" value="([^"]+)"/.exec(html);
  if (!match?.[1]) throw new Error('no CSRF token in the page');
  return match[1];
}

/**
 * The hidden fields a review page's sign form carries besides the CSRF token (the record stamp),
 * posted back as a browser would; none when the page offers no sign form.
 */
export function signFormHiddenFields(html: string): { recordStamp?: string } {
  const match = /name="recordStamp" value="([^"]+)"/.exec(html);
  return match?.[1] ? { recordStamp: match[1] } : {};
}

/** Signs in through the real form; returns the agent (cookie jar) and the response. */
export async function signIn(app: Express, email: string, password: string) {
  const agent = request.agent(app);
  const page = await agent.get('/signin');
  const response = await agent
    .post('/signin')
    .type('form')
    .send({ _csrf: csrfFrom(page.text), email, password });
  return { agent, response };
}

/** Session cookie value from a response's set-cookie header. */
export function sessionCookie(response: request.Response, name = 'rateledger.sid'): string | undefined {
  const header = response.headers['set-cookie'] as unknown as string[] | undefined;
  return header?.find((cookie) => cookie.startsWith(`${name}=`))?.split(';')[0];
}
