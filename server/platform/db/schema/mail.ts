import { sql } from 'drizzle-orm';
import { index, integer, jsonb, pgEnum, pgTable, serial, text, timestamp } from 'drizzle-orm/pg-core';
import { organisations } from './organisations.ts';

/** A time set by the database clock, as `createdAt()` in columns.ts, under this table's own name. */
const databaseNow = (name: string) =>
  timestamp(name, { withTimezone: true, mode: 'date' }).notNull().default(sql`now()`);

/** One header line of a received message as it arrived (unfolded, not decoded). */
export interface ReceivedHeaderLine {
  name: string;
  line: string;
}

/**
 * Messages the local SMTP server (server/platform/mail/local-smtp-server.ts) received: the demo's and the
 * tests' stand-in for a mailbox, read on the admin outbox page. Kept in PostgreSQL, not in process
 * memory, so every app instance shows the same outbox.
 *
 * `organisation_id` is what the sending app claimed in its `X-Rateledger-Organisation` header; it
 * is not a foreign key, because the local server accepts mail from any program on the machine.
 */
export const receivedMail = pgTable(
  'received_mail',
  {
    id: serial('id').primaryKey(),
    organisationId: integer('organisation_id'),
    /** The Message-ID header, if the message had one. */
    messageId: text('message_id'),
    /** SMTP envelope: MAIL FROM and every RCPT TO, as the client sent them. */
    envelopeFrom: text('envelope_from'),
    envelopeTo: text('envelope_to').array().notNull(),
    /** Decoded header values for display ("Name <address>, ..."). */
    fromHeader: text('from_header').notNull().default(''),
    toHeader: text('to_header').notNull().default(''),
    ccHeader: text('cc_header').notNull().default(''),
    subject: text('subject').notNull().default(''),
    textBody: text('text_body').notNull().default(''),
    htmlBody: text('html_body'),
    /** The message's own Date header (the sender's clock); `received_at` is the database clock. */
    sentAt: timestamp('sent_at', { withTimezone: true, mode: 'date' }),
    sizeBytes: integer('size_bytes').notNull(),
    headers: jsonb('headers').$type<ReceivedHeaderLine[]>().notNull().default([]),
    receivedAt: databaseNow('received_at'),
  },
  (table) => [index('received_mail_org_received').on(table.organisationId, table.receivedAt)],
);

export const mailDeliveryStatusEnum = pgEnum('mail_delivery_status', ['sent', 'failed']);

/**
 * Every attempt of the app to send a message (server/platform/mail/mail-transport.ts), whether the SMTP
 * server accepted it or not, so that a failed notification is visible rather than silent.
 */
export const outgoingMail = pgTable(
  'outgoing_mail',
  {
    id: serial('id').primaryKey(),
    organisationId: integer('organisation_id').references(() => organisations.id),
    /** Which message template, e.g. `review-requested`. */
    kind: text('kind').notNull(),
    /** The record the message is about, as in the audit trail (`report`, `RL-2026-0001`). */
    recordType: text('record_type'),
    recordId: text('record_id'),
    recipients: text('recipients').array().notNull(),
    subject: text('subject').notNull(),
    status: mailDeliveryStatusEnum('status').notNull(),
    /** Why delivery failed, or which recipients the server refused when it accepted the others. */
    failureReason: text('failure_reason'),
    messageId: text('message_id'),
    /** The server's last reply, e.g. `250 OK: message queued`. */
    smtpResponse: text('smtp_response'),
    /** Where it was sent (`smtp://host:port`, never credentials). */
    transport: text('transport').notNull(),
    durationMs: integer('duration_ms').notNull(),
    attemptedAt: databaseNow('attempted_at'),
  },
  (table) => [index('outgoing_mail_org_attempted').on(table.organisationId, table.attemptedAt)],
);
