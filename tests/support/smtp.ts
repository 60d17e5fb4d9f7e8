import { and, asc, desc, eq, gt, sql } from 'drizzle-orm';
import type { Database } from '../../server/platform/db/client.ts';
import { receivedMail } from '../../server/platform/db/schema/index.ts';
import { type LocalSmtpServer, startLocalSmtpServer } from '../../server/platform/mail/local-smtp-server.ts';
import { mailConfig } from '../../server/platform/mail/mail-config.ts';
import { closeMailTransport, configureMailTransport } from '../../server/platform/mail/mail-transport.ts';

export type ReceivedMail = typeof receivedMail.$inferSelect;

export interface TestSmtp {
  server: LocalSmtpServer;
  url: string;
  /** Messages received since this helper started whose envelope includes `address`, oldest first. */
  mailTo(address: string): Promise<ReceivedMail[]>;
  /** Waits (polling the table) until a message to `address` arrived; throws after `timeoutMs`. */
  waitForMailTo(address: string, timeoutMs?: number): Promise<ReceivedMail>;
  close(): Promise<void>;
}

/**
 * Starts the app's local SMTP server on an ephemeral 127.0.0.1 port for a test file and points the
 * app's mail transport at it (pass `{ configureTransport: false }` to leave the transport alone).
 * Received mail lands in the `received_mail` table of the test database, as in the running app.
 *
 * Usage: `const smtp = await startTestSmtp(world.database.db)` in beforeAll, `await smtp.close()`
 * in afterAll; after the app sent mail, `await smtp.mailTo(user.email)`.
 */
export async function startTestSmtp(
  db: Database,
  options: { configureTransport?: boolean } = {},
): Promise<TestSmtp> {
  const [mark] = await db
    .select({ id: sql<number>`coalesce(max(${receivedMail.id}), 0)` })
    .from(receivedMail);
  const sinceId = Number(mark?.id ?? 0);
  const server = await startLocalSmtpServer(db, { port: 0 });
  const configure = options.configureTransport ?? true;
  if (configure) configureMailTransport({ url: server.url, from: mailConfig().from, mode: 'local' });

  const mailTo = (address: string) =>
    db
      .select()
      .from(receivedMail)
      .where(and(gt(receivedMail.id, sinceId), sql`${address} = any(${receivedMail.envelopeTo})`))
      .orderBy(asc(receivedMail.id));

  return {
    server,
    url: server.url,
    mailTo,
    async waitForMailTo(address, timeoutMs = 5_000) {
      const deadline = Date.now() + timeoutMs;
      for (;;) {
        const [latest] = await db
          .select()
          .from(receivedMail)
          .where(and(gt(receivedMail.id, sinceId), sql`${address} = any(${receivedMail.envelopeTo})`))
          .orderBy(desc(receivedMail.id))
          .limit(1);
        if (latest) return latest;
        if (Date.now() > deadline) throw new Error(`no mail to ${address} arrived within ${timeoutMs} ms`);
        await new Promise((resolve) => setTimeout(resolve, 50));
      }
    },
    async close() {
      if (configure) await closeMailTransport();
      await server.close();
    },
  };
}

/** The received message with this id (e.g. to read one the outbox page lists). */
export async function receivedMessage(db: Database, id: number): Promise<ReceivedMail | undefined> {
  const [row] = await db.select().from(receivedMail).where(eq(receivedMail.id, id));
  return row;
}
