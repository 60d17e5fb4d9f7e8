import type { AddressInfo } from 'node:net';
import { type AddressObject, type EmailAddress, simpleParser } from 'mailparser';
import { SMTPServer, type SMTPServerDataStream, type SMTPServerSession } from 'smtp-server';
import type { Database } from '../db/client.ts';
import { type ReceivedHeaderLine, receivedMail } from '../db/schema/index.ts';
import { logger } from '../logging/logger.ts';

/**
 * The app's own SMTP server for the demo and the tests, in place of a hosted mail service: it
 * accepts every message sent to it and stores it, parsed, in `received_mail`, where the admin
 * outbox page shows it. It listens on 127.0.0.1 only — never on another interface, whatever the
 * configuration — asks for no authentication and offers no STARTTLS (nothing leaves loopback).
 *
 * Example: `const server = await startLocalSmtpServer(db, { port: 0 })` → `server.url` is
 * `smtp://127.0.0.1:<free port>`; `await server.close()` when done.
 */

/** The only address it binds to. */
export const LOCAL_SMTP_HOST = '127.0.0.1';
/** Larger messages are refused with 552; the app's notifications are a few kilobytes. */
export const LOCAL_SMTP_MAX_BYTES = 10 * 1024 * 1024;
/** Shutdown waits this long for an open SMTP conversation before closing it. */
const CLOSE_TIMEOUT_MS = 2_000;
const MAX_STORED_HEADER_LINES = 200;

export interface LocalSmtpServer {
  host: string;
  port: number;
  /** `smtp://127.0.0.1:<port>`, for the transport. */
  url: string;
  close(): Promise<void>;
}

export interface LocalSmtpOptions {
  /** 0 picks a free port. */
  port: number;
  maxBytes?: number;
}

class SmtpReplyError extends Error {
  constructor(
    readonly responseCode: number,
    message: string,
  ) {
    super(message);
  }
}

// PostgreSQL text cannot hold NUL; a message with one is still stored, without it.
const clean = (value: string | undefined | null) => (value ?? '').replaceAll('\u0000', '');

/** `Name <address>, address` — for reading, so display names are shown unquoted. */
function addressText(value: AddressObject | AddressObject[] | undefined): string {
  const show = (entry: EmailAddress): string => {
    if (entry.group) return `${entry.name}: ${entry.group.map(show).join(', ')};`;
    if (!entry.address) return entry.name;
    return entry.name ? `${entry.name} <${entry.address}>` : entry.address;
  };
  const objects = Array.isArray(value) ? value : value ? [value] : [];
  return clean(objects.flatMap((object) => object.value.map(show)).join(', '));
}

function claimedOrganisation(value: unknown): number | null {
  const text = typeof value === 'string' ? value.trim() : '';
  if (!/^\d{1,9}$/.test(text)) return null;
  return Number(text);
}

async function readMessage(stream: SMTPServerDataStream): Promise<Buffer> {
  const chunks: Buffer[] = [];
  for await (const chunk of stream) chunks.push(chunk as Buffer);
  if (stream.sizeExceeded) throw new SmtpReplyError(552, 'Message exceeds the fixed maximum message size');
  return Buffer.concat(chunks);
}

async function storeMessage(db: Database, raw: Buffer, session: SMTPServerSession): Promise<void> {
  const parsed = await simpleParser(raw);
  const headers: ReceivedHeaderLine[] = parsed.headerLines
    .slice(0, MAX_STORED_HEADER_LINES)
    .map((header) => ({ name: clean(header.key), line: clean(header.line) }));
  const mailFrom = session.envelope.mailFrom;
  await db.insert(receivedMail).values({
    organisationId: claimedOrganisation(parsed.headers.get('x-rateledger-organisation')),
    messageId: parsed.messageId ? clean(parsed.messageId) : null,
    envelopeFrom: mailFrom ? clean(mailFrom.address) : null,
    envelopeTo: session.envelope.rcptTo.map((recipient) => clean(recipient.address)),
    fromHeader: addressText(parsed.from),
    toHeader: addressText(parsed.to),
    ccHeader: addressText(parsed.cc),
    subject: clean(parsed.subject),
    textBody: clean(parsed.text),
    htmlBody: parsed.html === false ? null : clean(parsed.html),
    sentAt: parsed.date && !Number.isNaN(parsed.date.getTime()) ? parsed.date : null,
    sizeBytes: raw.length,
    headers,
  });
}

/** Starts the server on 127.0.0.1; rejects with a clear message when the port is taken. */
export function startLocalSmtpServer(db: Database, options: LocalSmtpOptions): Promise<LocalSmtpServer> {
  const server = new SMTPServer({
    name: 'localhost',
    banner: 'Rateledger local SMTP server (messages are kept for the admin outbox)',
    secure: false,
    authOptional: true,
    disabledCommands: ['AUTH', 'STARTTLS'],
    size: options.maxBytes ?? LOCAL_SMTP_MAX_BYTES,
    closeTimeout: CLOSE_TIMEOUT_MS,
    logger: false,
    onData(stream, session, callback) {
      readMessage(stream)
        .then((raw) => storeMessage(db, raw, session))
        .then(
          () => callback(),
          (error: unknown) => {
            if (error instanceof SmtpReplyError) return callback(error);
            logger.error({ err: error }, 'local SMTP server could not store a message');
            callback(new SmtpReplyError(451, 'Could not store the message; try again later'));
          },
        );
    },
  });
  return new Promise((resolve, reject) => {
    const onStartError = (error: NodeJS.ErrnoException) => {
      reject(
        error.code === 'EADDRINUSE'
          ? new Error(
              `The local SMTP server cannot listen on ${LOCAL_SMTP_HOST}:${options.port}: the port is in use. ` +
                'Set LOCAL_SMTP_PORT to a free port (0 picks one), or set SMTP_URL to use a real server.',
            )
          : error,
      );
    };
    server.once('error', onStartError);
    server.listen(options.port, LOCAL_SMTP_HOST, () => {
      server.off('error', onStartError);
      server.on('error', (error) => logger.error({ err: error }, 'local SMTP server error'));
      const { address, port } = server.server.address() as AddressInfo;
      resolve({
        host: address,
        port,
        url: `smtp://${address}:${port}`,
        close: () => new Promise<void>((done) => server.close(() => done())),
      });
    });
  });
}
