import net, { type AddressInfo } from 'node:net';
import os from 'node:os';
import { and, desc, eq, sql } from 'drizzle-orm';
import nodemailer from 'nodemailer';
import { afterAll, afterEach, beforeAll, describe, expect, it, vi } from 'vitest';
import { appendAuditEvent } from '../../server/platform/audit/audit-trail.ts';
import { auditEvents, outgoingMail, receivedMail } from '../../server/platform/db/schema/index.ts';
import { logger } from '../../server/platform/logging/logger.ts';
import { startLocalSmtpServer } from '../../server/platform/mail/local-smtp-server.ts';
import { mailConfig } from '../../server/platform/mail/mail-config.ts';
import {
  commitThenMail,
  configureMailTransport,
  type MailMessage,
  sendMail,
} from '../../server/platform/mail/mail-transport.ts';
import { reviewRequestedMail } from '../../server/platform/mail/messages.ts';
import { startTestSmtp, type TestSmtp } from '../support/smtp.ts';
import { createTestWorld, type TestWorld } from '../support/test-app.ts';

let world: TestWorld;
let smtp: TestSmtp;

beforeAll(async () => {
  world = await createTestWorld({ analyst: ['analyst'], reviewer: ['reviewer'] });
  smtp = await startTestSmtp(world.database.db);
});
afterEach(() => {
  vi.restoreAllMocks();
  configureMailTransport({ url: smtp.url, from: mailConfig().from, mode: 'local' });
});
afterAll(async () => {
  await smtp?.close();
  await world?.close();
});

/** A port nothing listens on: bind an ephemeral one, note it, close it. */
async function closedPort(): Promise<number> {
  const probe = net.createServer();
  await new Promise<void>((resolve) => probe.listen(0, '127.0.0.1', resolve));
  const { port } = probe.address() as AddressInfo;
  await new Promise<void>((resolve) => probe.close(() => resolve()));
  return port;
}

const connects = (host: string, port: number) =>
  new Promise<boolean>((resolve) => {
    const socket = net.connect({ host, port });
    socket.setTimeout(2_000);
    socket.once('connect', () => {
      socket.destroy();
      resolve(true);
    });
    socket.once('error', () => resolve(false));
    socket.once('timeout', () => {
      socket.destroy();
      resolve(false);
    });
  });

const messageTo = (address: string, overrides: Partial<MailMessage> = {}): MailMessage => ({
  organisationId: world.organisationId,
  kind: 'test',
  to: address,
  subject: 'test message',
  text: 'body',
  ...overrides,
});

describe('sending through the local SMTP server', () => {
  it('delivers a message with its UTF-8 subject and body intact and records the attempt', async () => {
    const reviewer = world.users.reviewer!;
    // German, Greek, CJK and a symbol outside the BMP: every byte must survive MIME encoding.
    const subject = 'RL-2026-0042: Prüfbericht – Stabilität bei 25 °C, Δt = 6 Monate, 安定性 ✓ 🧪';
    const text = 'Grüße aus dem Labor: Gehalt 98,7 % (µg/mL), Ea ≈ 83 kJ·mol⁻¹.\n日本語の本文。\n';
    const delivery = await sendMail(world.database.db, {
      organisationId: world.organisationId,
      kind: 'review-requested',
      to: { name: 'Test Revïewer', address: reviewer.email },
      subject,
      text,
      html: '<p>Grüße – 安定性</p>',
      record: { type: 'report', id: 'RL-2026-0042' },
    });
    expect(delivery).toMatchObject({ status: 'sent', reason: null });
    expect(delivery.deliveryId).toBeGreaterThan(0);

    const [received] = await smtp.mailTo(reviewer.email);
    expect(received).toBeDefined();
    expect(received!.subject).toBe(subject);
    expect(received!.textBody).toBe(text);
    expect(received!.htmlBody).toContain('<p>Grüße – 安定性</p>');
    expect(received!.toHeader).toBe(`Test Revïewer <${reviewer.email}>`);
    expect(received!.fromHeader).toBe('Rateledger <no-reply@rateledger.invalid>');
    expect(received!.organisationId).toBe(world.organisationId);
    expect(received!.messageId).toBe(delivery.messageId);
    expect(received!.envelopeTo).toEqual([reviewer.email]);
    expect(received!.sizeBytes).toBeGreaterThan(text.length);
    expect(received!.headers.some((header) => header.name === 'x-rateledger-kind')).toBe(true);

    const [attempt] = await world.database.db
      .select()
      .from(outgoingMail)
      .where(eq(outgoingMail.id, delivery.deliveryId!));
    expect(attempt).toMatchObject({
      status: 'sent',
      kind: 'review-requested',
      recordType: 'report',
      recordId: 'RL-2026-0042',
      recipients: [reviewer.email],
      subject,
      organisationId: world.organisationId,
      transport: smtp.url,
      failureReason: null,
    });
    expect(attempt!.smtpResponse).toMatch(/^250/);
  });

  it('delivers a template message to each reviewer with the absolute link in the body', async () => {
    const reviewer = world.users.reviewer!;
    const content = reviewRequestedMail({
      reportNumber: 'RL-2026-0043',
      reportTitle: 'Veltrazine 10 mg tablets',
      versionNumber: 1,
      authorName: 'Test analyst',
      reviewerName: 'Test reviewer',
      reportPath: '/reports/43',
    });
    const delivery = await sendMail(world.database.db, {
      organisationId: world.organisationId,
      kind: 'review-requested',
      to: reviewer.email,
      ...content,
    });
    expect(delivery.status).toBe('sent');
    const received = await smtp.waitForMailTo(reviewer.email);
    expect(received.subject).toBe('RL-2026-0043: review requested — Veltrazine 10 mg tablets (version 1)');
    expect(received.textBody).toContain(`${mailConfig().publicUrl}/reports/43`);
  });
});

describe('when delivery fails', () => {
  it('a closed port gives a recorded failure and a log line, and never an exception', async () => {
    const port = await closedPort();
    configureMailTransport({ url: `smtp://127.0.0.1:${port}`, from: mailConfig().from, mode: 'local' });
    const logged = vi.spyOn(logger, 'error').mockImplementation(() => {});
    const address = `nobody.${port}@test.example`;
    const delivery = await sendMail(world.database.db, messageTo(address, { kind: 'report-signed' }));
    expect(delivery.status).toBe('failed');
    expect(delivery.reason).toMatch(/ECONNREFUSED/);
    // One structured line with the kind and the count of recipients, never the addresses themselves.
    expect(logged).toHaveBeenCalledWith(
      expect.objectContaining({
        kind: 'report-signed',
        recipients: 1,
        reason: expect.stringMatching(/ECONNREFUSED/),
      }),
      'mail not delivered',
    );
    expect(JSON.stringify(logged.mock.calls)).not.toContain(address);
    const [attempt] = await world.database.db
      .select()
      .from(outgoingMail)
      .where(eq(outgoingMail.id, delivery.deliveryId!));
    expect(attempt).toMatchObject({
      status: 'failed',
      recipients: [address],
      transport: `smtp://127.0.0.1:${port}`,
    });
    expect(attempt!.failureReason).toMatch(/ECONNREFUSED/);
  });

  it('the transaction commits; the mail sent after it fails without undoing or throwing', async () => {
    const port = await closedPort();
    configureMailTransport({ url: `smtp://127.0.0.1:${port}`, from: mailConfig().from, mode: 'local' });
    vi.spyOn(console, 'error').mockImplementation(() => {});
    const { result, deliveries } = await commitThenMail(world.database.db, async (tx) => {
      const event = await appendAuditEvent(tx, {
        organisationId: world.organisationId,
        actorUserId: world.users.analyst!.id,
        actorLabel: world.users.analyst!.email,
        action: 'test.mail-after-commit',
      });
      return { result: event.id, mail: [messageTo(world.users.reviewer!.email)] };
    });
    expect(deliveries.map((delivery) => delivery.status)).toEqual(['failed']);
    const [event] = await world.database.db.select().from(auditEvents).where(eq(auditEvents.id, result));
    expect(event?.action).toBe('test.mail-after-commit');
  });

  it('a transaction that rolls back sends nothing', async () => {
    const address = `rolled-back.${Date.now()}@test.example`;
    await expect(
      commitThenMail(world.database.db, async () => {
        throw new Error('the change was refused');
      }),
    ).rejects.toThrow('the change was refused');
    await expect(
      commitThenMail(world.database.db, async (tx) => {
        await tx.execute(sql`select 1`);
        const mail = [messageTo(address)];
        if (mail.length) throw new Error('refused after building the mail');
        return { result: null, mail };
      }),
    ).rejects.toThrow('refused after building the mail');
    const attempts = await world.database.db
      .select()
      .from(outgoingMail)
      .where(sql`${address} = any(${outgoingMail.recipients})`);
    expect(attempts).toEqual([]);
    expect(await smtp.mailTo(address)).toEqual([]);
  });

  it('an invalid recipient is a recorded failure, not an exception', async () => {
    vi.spyOn(console, 'error').mockImplementation(() => {});
    const delivery = await sendMail(world.database.db, messageTo('not an address'));
    expect(delivery.status).toBe('failed');
    expect(delivery.reason).toMatch(/not valid/);
    const [attempt] = await world.database.db
      .select()
      .from(outgoingMail)
      .where(and(eq(outgoingMail.organisationId, world.organisationId), eq(outgoingMail.status, 'failed')))
      .orderBy(desc(outgoingMail.id))
      .limit(1);
    expect(attempt?.recipients).toEqual(['not an address']);
  });

  it('called with a transaction it refuses to send (mail must wait for the commit)', async () => {
    vi.spyOn(console, 'error').mockImplementation(() => {});
    const address = `inside-tx.${Date.now()}@test.example`;
    const delivery = await world.database.db.transaction((tx) =>
      sendMail(tx as unknown as typeof world.database.db, messageTo(address)),
    );
    expect(delivery.status).toBe('failed');
    expect(delivery.reason).toMatch(/inside a transaction/);
    expect(await smtp.mailTo(address)).toEqual([]);
  });
});

describe('the local SMTP server', () => {
  it('binds to 127.0.0.1 only: not reachable on ::1 or on any other interface address', async () => {
    const server = await startLocalSmtpServer(world.database.db, { port: 0 });
    try {
      expect(server.host).toBe('127.0.0.1');
      expect(server.url).toBe(`smtp://127.0.0.1:${server.port}`);
      expect(await connects('127.0.0.1', server.port)).toBe(true);
      expect(await connects('::1', server.port)).toBe(false);
      const others = Object.values(os.networkInterfaces())
        .flat()
        .filter((entry) => entry && !entry.internal)
        .map((entry) => entry!.address);
      for (const address of others) expect(await connects(address, server.port)).toBe(false);
    } finally {
      await server.close();
    }
  });

  it('refuses a message over its size limit with 552 and stores nothing', async () => {
    const server = await startLocalSmtpServer(world.database.db, { port: 0, maxBytes: 4_096 });
    const transport = nodemailer.createTransport({ url: server.url, ignoreTLS: true } as never);
    const address = `too-big.${server.port}@test.example`;
    try {
      await expect(
        transport.sendMail({ from: 'a@test.example', to: address, subject: 'big', text: 'x'.repeat(20_000) }),
      ).rejects.toMatchObject({ responseCode: 552 });
      const stored = await world.database.db
        .select()
        .from(receivedMail)
        .where(sql`${address} = any(${receivedMail.envelopeTo})`);
      expect(stored).toEqual([]);
    } finally {
      transport.close();
      await server.close();
    }
  });

  it('a second server on a taken port fails to start with a message saying what to do', async () => {
    const port = Number(new URL(smtp.url).port);
    await expect(startLocalSmtpServer(world.database.db, { port })).rejects.toThrow(
      /port is in use.*LOCAL_SMTP_PORT/,
    );
  });

  it('keeps a message without an organisation header, with none claimed', async () => {
    const transport = nodemailer.createTransport({ url: smtp.url, ignoreTLS: true } as never);
    const address = `other-program.${Date.now()}@test.example`;
    try {
      await transport.sendMail({
        from: 'cron@test.example',
        to: address,
        subject: 'nightly',
        text: 'ok',
        headers: { 'X-Rateledger-Organisation': 'not-a-number' },
      });
    } finally {
      transport.close();
    }
    const [stored] = await smtp.mailTo(address);
    expect(stored?.organisationId).toBeNull();
    expect(stored?.htmlBody).toBeNull();
  });
});
