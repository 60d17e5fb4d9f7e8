import type { Database } from '../db/client.ts';
import { startLocalSmtpServer } from './local-smtp-server.ts';
import { describeSmtpUrl, type MailConfig, mailConfig } from './mail-config.ts';
import { closeMailTransport, configureMailTransport } from './mail-transport.ts';

export interface RunningMail {
  /** One line for the start-up banner: where mail goes and where to read it. */
  summary: string;
  close(): Promise<void>;
}

/**
 * Sets up the app's mail at start-up. With `SMTP_URL` the transport points at that server. Without
 * it the local SMTP server starts on 127.0.0.1 (LOCAL_SMTP_PORT, default 2525) and the transport
 * points at it; the messages are then readable on /admin/outbox. `close()` stops both.
 */
export async function startMail(db: Database, config: MailConfig = mailConfig()): Promise<RunningMail> {
  if (config.smtpUrl) {
    configureMailTransport({ url: config.smtpUrl, from: config.from, mode: 'external' });
    return {
      summary: `Mail goes to ${describeSmtpUrl(config.smtpUrl)} (SMTP_URL); there is no local outbox.`,
      close: closeMailTransport,
    };
  }
  const server = await startLocalSmtpServer(db, { port: config.localSmtpPort });
  configureMailTransport({ url: server.url, from: config.from, mode: 'local' });
  return {
    summary:
      `Local SMTP server listening on ${server.url} (loopback only); ` +
      `the mail it receives is on ${config.publicUrl}/admin/outbox (admins).`,
    close: async () => {
      await closeMailTransport();
      await server.close();
    },
  };
}
