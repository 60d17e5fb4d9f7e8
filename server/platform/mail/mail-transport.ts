import { PgTransaction } from 'drizzle-orm/pg-core';
import nodemailer, { type Transporter } from 'nodemailer';
import type SMTPTransport from 'nodemailer/lib/smtp-transport/index.js';
import { z } from 'zod';
import type { Database, Transaction } from '../db/client.ts';
import { outgoingMail } from '../db/schema/index.ts';
import { logger } from '../logging/logger.ts';
import { describeSmtpUrl, mailConfig } from './mail-config.ts';

/**
 * The one owner of the app's SMTP transport (nodemailer). Everything that sends mail goes through
 * `sendMail`, which never throws: each attempt — sent or failed, with the reason — is a row of
 * `outgoing_mail` and a log line, so a notification that did not go out is visible, not silent.
 *
 * Send only after the change the message announces has committed (a rolled-back review request
 * must not have told anyone). `commitThenMail` makes that the shape of the code: the transaction
 * returns the messages, and they are sent once it has committed.
 */

/** `'Name <address>'` is not accepted: give the name and address separately. */
export type MailRecipient = string | { name: string; address: string };

export interface MailMessage {
  /** The organisation the message is sent for; the local outbox shows it to that organisation. */
  organisationId: number | null;
  /** Which message, e.g. `review-requested` (see messages.ts). */
  kind: string;
  to: MailRecipient | MailRecipient[];
  subject: string;
  text: string;
  html?: string;
  /** The record the message is about, as the audit trail names it. */
  record?: { type: string; id: string | number };
}

export interface MailDelivery {
  status: 'sent' | 'failed';
  /** The `outgoing_mail` row, or null when even recording the attempt failed (then it is logged). */
  deliveryId: number | null;
  messageId: string | null;
  /** Why it failed, or which recipients were refused while others were accepted. */
  reason: string | null;
}

export interface MailTransportSettings {
  url: string;
  from: string;
  /** `local`: the app's own loopback SMTP server (the admin outbox); `external`: SMTP_URL. */
  mode: 'local' | 'external';
}

/** Give up on an unreachable or silent server after this long, so a request never hangs on mail. */
const CONNECTION_TIMEOUT_MS = 10_000;
const SOCKET_TIMEOUT_MS = 30_000;

const recipientSchema = z.union([z.email(), z.object({ name: z.string().max(200), address: z.email() })]);
const messageSchema = z.object({
  to: z.union([recipientSchema, z.array(recipientSchema).min(1)]),
  subject: z.string().min(1).max(500),
  text: z.string(),
  html: z.string().optional(),
});

let current: {
  settings: MailTransportSettings;
  transporter: Transporter<SMTPTransport.SentMessageInfo>;
} | null = null;

/** Points the app's mail at `settings.url` (closing any earlier transport). */
export function configureMailTransport(settings: MailTransportSettings): void {
  current?.transporter.close();
  const local = settings.mode === 'local';
  const transporter = nodemailer.createTransport({
    url: settings.url,
    // The local server offers no TLS (loopback only); a real server negotiates STARTTLS as usual.
    ignoreTLS: local,
    connectionTimeout: CONNECTION_TIMEOUT_MS,
    greetingTimeout: CONNECTION_TIMEOUT_MS,
    socketTimeout: SOCKET_TIMEOUT_MS,
  } as SMTPTransport.Options);
  current = { settings, transporter };
}

/**
 * The transport in use. When nothing configured one (scripts, tests that did not start a server),
 * it follows the environment: SMTP_URL, or the local server's port on 127.0.0.1.
 */
export function mailTransportSettings(): MailTransportSettings {
  if (!current) {
    const config = mailConfig();
    configureMailTransport(
      config.smtpUrl
        ? { url: config.smtpUrl, from: config.from, mode: 'external' }
        : { url: `smtp://127.0.0.1:${config.localSmtpPort}`, from: config.from, mode: 'local' },
    );
  }
  return current!.settings;
}

/** Closes the transport (shutdown, end of a test file). */
export async function closeMailTransport(): Promise<void> {
  current?.transporter.close();
  current = null;
}

const addressOf = (recipient: MailRecipient | undefined) =>
  typeof recipient === 'string' ? recipient : String(recipient?.address ?? '');

function describeError(error: unknown): string {
  if (error instanceof z.ZodError) {
    return `the message is not valid: ${error.issues.map((issue) => `${issue.path.join('.') || 'message'} ${issue.message}`).join('; ')}`;
  }
  const typed = error as { code?: string; responseCode?: number; message?: string };
  const prefix = typed.responseCode ? `${typed.responseCode} ` : typed.code ? `${typed.code}: ` : '';
  return `${prefix}${typed.message ?? String(error)}`.slice(0, 1000);
}

/**
 * Sends one message and records the attempt. Resolves with the outcome; never rejects.
 * Takes the database, not a transaction: call it after the transaction has committed.
 */
export async function sendMail(db: Database, message: MailMessage): Promise<MailDelivery> {
  const settings = mailTransportSettings();
  const transporter = current!.transporter;
  const recipients = (Array.isArray(message.to) ? message.to : [message.to]).map(addressOf);
  const started = performance.now();
  let outcome: Omit<MailDelivery, 'deliveryId'> & { response: string | null };
  if ((db as unknown) instanceof PgTransaction) {
    outcome = {
      status: 'failed',
      messageId: null,
      response: null,
      reason: 'sendMail was called inside a transaction; send after it commits (commitThenMail)',
    };
  } else {
    try {
      const valid = messageSchema.parse(message);
      const info = await transporter.sendMail({
        from: settings.from,
        to: valid.to,
        // A subject is one header line; a line break in it would start a new header.
        subject: valid.subject.replace(/[\r\n]+/g, ' '),
        text: valid.text,
        html: valid.html,
        headers: {
          'X-Rateledger-Kind': message.kind,
          ...(message.organisationId === null
            ? {}
            : { 'X-Rateledger-Organisation': String(message.organisationId) }),
        },
      });
      const refused = (info.rejected as unknown[]).map((entry) =>
        typeof entry === 'string' ? entry : String((entry as { address?: string }).address),
      );
      outcome = {
        status: 'sent',
        messageId: info.messageId ?? null,
        response: info.response ?? null,
        reason: refused.length > 0 ? `the server refused: ${refused.join(', ')}` : null,
      };
    } catch (error) {
      outcome = { status: 'failed', messageId: null, response: null, reason: describeError(error) };
    }
  }
  const durationMs = Math.round(performance.now() - started);
  const transport = describeSmtpUrl(settings.url);
  if (outcome.status === 'failed') {
    logger.error(
      { kind: message.kind, recipients: recipients.length, transport, reason: outcome.reason },
      'mail not delivered',
    );
  }
  let deliveryId: number | null = null;
  try {
    const [row] = await db
      .insert(outgoingMail)
      .values({
        organisationId: message.organisationId,
        kind: String(message.kind ?? 'unknown'),
        recordType: message.record?.type ?? null,
        recordId: message.record ? String(message.record.id) : null,
        recipients,
        subject: String(message.subject ?? '').slice(0, 500),
        status: outcome.status,
        failureReason: outcome.reason,
        messageId: outcome.messageId,
        smtpResponse: outcome.response,
        transport,
        durationMs,
      })
      .returning({ id: outgoingMail.id });
    deliveryId = row?.id ?? null;
  } catch (error) {
    logger.error({ err: error, kind: message.kind, status: outcome.status }, 'mail delivery not recorded');
  }
  return { status: outcome.status, deliveryId, messageId: outcome.messageId, reason: outcome.reason };
}

/**
 * Runs `work` in one transaction and sends the messages it returns once it has committed. If the
 * transaction fails, its error is thrown and nothing is sent; delivery problems never throw.
 */
export async function commitThenMail<T>(
  db: Database,
  work: (tx: Transaction) => Promise<{ result: T; mail: MailMessage[] }>,
): Promise<{ result: T; deliveries: MailDelivery[] }> {
  const { result, mail } = await db.transaction(work);
  const deliveries: MailDelivery[] = [];
  for (const message of mail) deliveries.push(await sendMail(db, message));
  return { result, deliveries };
}
