import { and, count, desc, eq, isNull, or } from 'drizzle-orm';
import { z } from 'zod';
import type { Database } from '../../platform/db/client.ts';
import { outgoingMail, type ReceivedHeaderLine, receivedMail } from '../../platform/db/schema/index.ts';
import { HttpError } from '../../platform/http/http-error.ts';
import { linkSegments, type TextSegment } from '../../platform/mail/link-segments.ts';
import { mailConfig } from '../../platform/mail/mail-config.ts';
import { mailTransportSettings } from '../../platform/mail/mail-transport.ts';

/**
 * The admin outbox: what the local SMTP server received, newest first, and the app's own record
 * of each delivery attempt. An organisation's admins see the messages the app sent for that
 * organisation, plus messages that name no organisation (sent to the local server by another
 * program); never another organisation's mail.
 */

export const OUTBOX_PAGE_SIZE = 25;
const RECENT_DELIVERIES = 20;

export const outboxListQuerySchema = z.object({
  page: z.coerce.number().int().min(1).max(100_000).default(1),
});
export const outboxMessageParamSchema = z.object({ id: z.coerce.number().int().min(1).max(2_147_483_647) });

export interface OutboxSummary {
  id: number;
  receivedAt: Date;
  fromHeader: string;
  toHeader: string;
  subject: string;
  sizeBytes: number;
}

export interface OutboxPage {
  /** False when SMTP_URL points at a real server: then nothing arrives locally. */
  localOutbox: boolean;
  messages: OutboxSummary[];
  page: number;
  pageCount: number;
  total: number;
}

export interface OutboxMessage extends OutboxSummary {
  messageId: string | null;
  envelopeFrom: string | null;
  envelopeTo: string[];
  ccHeader: string;
  sentAt: Date | null;
  bodySegments: TextSegment[];
  htmlBody: string | null;
  headers: ReceivedHeaderLine[];
}

export interface DeliveryAttempt {
  id: number;
  attemptedAt: Date;
  kind: string;
  recipients: string;
  subject: string;
  status: 'sent' | 'failed';
  failureReason: string | null;
  transport: string;
}

const visibleTo = (organisationId: number) =>
  or(eq(receivedMail.organisationId, organisationId), isNull(receivedMail.organisationId));

/** Whether this process sends to its own local SMTP server (rather than SMTP_URL). */
export function hasLocalOutbox(): boolean {
  return mailTransportSettings().mode === 'local';
}

/** One page of received messages, newest first; a page past the end shows the last page. */
export async function listOutbox(
  db: Database,
  organisationId: number,
  requestedPage: number,
): Promise<OutboxPage> {
  const [totals] = await db.select({ total: count() }).from(receivedMail).where(visibleTo(organisationId));
  const total = totals?.total ?? 0;
  const pageCount = Math.max(1, Math.ceil(total / OUTBOX_PAGE_SIZE));
  const page = Math.min(requestedPage, pageCount);
  const messages = await db
    .select({
      id: receivedMail.id,
      receivedAt: receivedMail.receivedAt,
      fromHeader: receivedMail.fromHeader,
      toHeader: receivedMail.toHeader,
      subject: receivedMail.subject,
      sizeBytes: receivedMail.sizeBytes,
    })
    .from(receivedMail)
    .where(visibleTo(organisationId))
    .orderBy(desc(receivedMail.receivedAt), desc(receivedMail.id))
    .limit(OUTBOX_PAGE_SIZE)
    .offset((page - 1) * OUTBOX_PAGE_SIZE);
  return { localOutbox: hasLocalOutbox(), messages, page, pageCount, total };
}

/** One received message with its headers; the text body split so only links to the app link. */
export async function getOutboxMessage(
  db: Database,
  organisationId: number,
  id: number,
): Promise<OutboxMessage> {
  const [row] = await db
    .select()
    .from(receivedMail)
    .where(and(eq(receivedMail.id, id), visibleTo(organisationId)));
  if (!row) throw new HttpError(404, `There is no message ${id} in your outbox.`);
  return {
    id: row.id,
    receivedAt: row.receivedAt,
    fromHeader: row.fromHeader,
    toHeader: row.toHeader,
    subject: row.subject,
    sizeBytes: row.sizeBytes,
    messageId: row.messageId,
    envelopeFrom: row.envelopeFrom,
    envelopeTo: row.envelopeTo,
    ccHeader: row.ccHeader,
    sentAt: row.sentAt,
    bodySegments: linkSegments(row.textBody, mailConfig().publicUrl),
    htmlBody: row.htmlBody,
    headers: row.headers,
  };
}

/** The app's latest delivery attempts for the organisation, failed ones included. */
export async function recentDeliveries(db: Database, organisationId: number): Promise<DeliveryAttempt[]> {
  const rows = await db
    .select()
    .from(outgoingMail)
    .where(eq(outgoingMail.organisationId, organisationId))
    .orderBy(desc(outgoingMail.attemptedAt), desc(outgoingMail.id))
    .limit(RECENT_DELIVERIES);
  return rows.map((row) => ({
    id: row.id,
    attemptedAt: row.attemptedAt,
    kind: row.kind,
    recipients: row.recipients.join(', '),
    subject: row.subject,
    status: row.status,
    failureReason: row.failureReason,
    transport: row.transport,
  }));
}
