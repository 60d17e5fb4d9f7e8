import { afterAll, afterEach, beforeAll, describe, expect, it, vi } from 'vitest';
import { logger } from '../../server/platform/logging/logger.ts';
import { createTestWorld, signIn, type TestWorld } from '../support/test-app.ts';

let world: TestWorld;
beforeAll(async () => {
  world = await createTestWorld({ analyst: ['analyst'] });
});
afterAll(() => world.close());
afterEach(() => vi.restoreAllMocks());

/** Every object handed to the logger during `work`, as the JSON pino would write. */
async function logged(work: () => Promise<unknown>) {
  const lines: Record<string, unknown>[] = [];
  for (const level of ['info', 'warn', 'error'] as const) {
    vi.spyOn(logger, level).mockImplementation(((fields: unknown) => {
      lines.push(JSON.parse(JSON.stringify(fields)) as Record<string, unknown>);
    }) as never);
  }
  await work();
  return lines;
}

describe('structured request log (common practice: one line per request, no secrets)', () => {
  it('writes one line per request with request id, route, status, user and organisation', async () => {
    const { analyst } = world.users;
    let requestId = '';
    const lines = await logged(async () => {
      const { agent } = await signIn(world.app, analyst!.email, analyst!.password);
      const response = await agent.get('/api/me');
      requestId = response.headers['x-request-id'] as string;
    });
    const me = lines.find((line) => line.reqId === requestId);
    expect(me).toMatchObject({
      method: 'GET',
      route: '/api/me',
      status: 200,
      userId: analyst!.id,
      organisationId: world.organisationId,
    });
    expect(requestId).toMatch(/^[0-9a-f-]{36}$/);
  });

  it('never logs the password typed, the session cookie or a token in the address', async () => {
    const { analyst } = world.users;
    const lines = await logged(async () => {
      const { agent } = await signIn(world.app, analyst!.email, analyst!.password);
      await agent.get('/invitations/secret-token-abcdef0123456789');
      await agent.get('/password-reset/other-secret-token-9876543210');
    });
    const text = JSON.stringify(lines);
    expect(lines.length).toBeGreaterThanOrEqual(3);
    expect(text).not.toContain(analyst!.password);
    expect(text).not.toContain('secret-token-abcdef0123456789');
    expect(text).not.toContain('other-secret-token-9876543210');
    expect(text).not.toContain('rateledger.sid');
  });
});
