import { mailTime } from '../../../shared/time/zoned-time.ts';
import { mailConfig } from './mail-config.ts';

/**
 * The messages Rateledger sends, each as plain text and a simple HTML version in which every
 * value is escaped. Functions only: the caller (review workflow, administration) builds the
 * content, then hands it to `sendMail` with the recipients once its transaction has committed.
 * Links are absolute, on PUBLIC_URL; subjects begin with the report number so that a mailbox
 * sorts and threads them by report.
 *
 * Example: `reviewRequestedMail({ reportNumber: 'RL-2026-0007', reportTitle: 'Veltrazine 10 mg',
 * versionNumber: 2, authorName: 'A. Analyst', reviewerName: 'R. Reviewer', reportPath: '/reports/7' })`
 * → subject `RL-2026-0007: review requested — Veltrazine 10 mg (version 2)`.
 */

export interface MailContent {
  subject: string;
  text: string;
  html: string;
}

export type MailKind =
  | 'review-requested'
  | 'report-returned'
  | 'report-signed'
  | 'invitation'
  | 'password-reset'
  | 'sign-in-locked'
  | 'sign-in-locked-admin';

interface ReportMailBase {
  reportNumber: string;
  reportTitle: string;
  versionNumber: number;
  /** Path of the report (or the version) on this site, e.g. `/reports/7`; made absolute on PUBLIC_URL. */
  reportPath: string;
}

export function escapeHtml(value: string): string {
  return value
    .replaceAll('&', '&amp;')
    .replaceAll('<', '&lt;')
    .replaceAll('>', '&gt;')
    .replaceAll('"', '&quot;')
    .replaceAll("'", '&#39;');
}

/** `PUBLIC_URL` + a site path. Throws TypeError for anything but a path on this site. */
export function absoluteLink(sitePath: string): string {
  if (!sitePath.startsWith('/') || sitePath.startsWith('//') || /[\s\\]/.test(sitePath)) {
    throw new TypeError(`a link in a message must be a path on this site, not "${sitePath}"`);
  }
  return `${mailConfig().publicUrl}${sitePath}`;
}

const oneLine = (value: string) => value.replace(/\s+/g, ' ').trim();

/** A paragraph is a string; a link is `{ label, href }`; a quotation is `{ quote }`. */
type Block = string | { label: string; href: string } | { quote: string };

function compose(subject: string, greeting: string, blocks: Block[]): MailContent {
  const textBlocks = blocks.map((block) => {
    if (typeof block === 'string') return block;
    if ('quote' in block)
      return block.quote
        .split(/\r?\n/)
        .map((line) => `> ${line}`)
        .join('\n');
    return `${block.label}:\n${block.href}`;
  });
  const htmlBlocks = blocks.map((block) => {
    if (typeof block === 'string') return `<p>${escapeHtml(block)}</p>`;
    if ('quote' in block) {
      const lines = block.quote.split(/\r?\n/).map(escapeHtml).join('<br>');
      return `<blockquote style="border-left:3px solid #c9c2b3;margin:0;padding:0 0 0 12px">${lines}</blockquote>`;
    }
    return `<p><a href="${escapeHtml(block.href)}">${escapeHtml(block.label)}</a></p>`;
  });
  const signOff = 'This message was sent by Rateledger. Do not reply to it.';
  return {
    subject: oneLine(subject),
    text: [greeting, ...textBlocks, '--', signOff].join('\n\n'),
    html:
      '<!doctype html><html><body style="font-family:sans-serif;color:#1f2933;line-height:1.5">' +
      `<p>${escapeHtml(greeting)}</p>${htmlBlocks.join('')}` +
      `<p style="color:#6b7280;font-size:12px">${escapeHtml(signOff)}</p></body></html>`,
  };
}

const reportLine = (report: ReportMailBase) =>
  `${report.reportNumber} "${oneLine(report.reportTitle)}", version ${report.versionNumber}`;

/** To each chosen reviewer: the author asks them to review (and perhaps sign) a report version. */
export function reviewRequestedMail(
  input: ReportMailBase & { authorName: string; reviewerName: string; note?: string },
): MailContent {
  const blocks: Block[] = [
    `${input.authorName} asks you to review report ${reportLine(input)}.`,
    ...(input.note?.trim() ? [`Their note:`, { quote: input.note.trim() }] : []),
    { label: 'Open the report', href: absoluteLink(input.reportPath) },
    'Sign only what you have checked: your electronic signature is the legally binding equivalent of your handwritten signature.',
  ];
  return compose(
    `${input.reportNumber}: review requested — ${input.reportTitle} (version ${input.versionNumber})`,
    `Dear ${input.reviewerName},`,
    blocks,
  );
}

/** To the author: a reviewer returned the version to draft with a comment. */
export function reportReturnedMail(
  input: ReportMailBase & { authorName: string; reviewerName: string; comment: string },
): MailContent {
  return compose(
    `${input.reportNumber}: returned by ${input.reviewerName} — ${input.reportTitle} (version ${input.versionNumber})`,
    `Dear ${input.authorName},`,
    [
      `${input.reviewerName} returned report ${reportLine(input)} to draft with this comment:`,
      { quote: input.comment },
      'Address the comment in a new version and submit it for review again.',
      { label: 'Open the report', href: absoluteLink(input.reportPath) },
    ],
  );
}

/** To the author: the version was signed. */
export function reportSignedMail(
  input: ReportMailBase & {
    authorName: string;
    signerName: string;
    /** The meaning of the signature, e.g. "Approved". */
    meaning: string;
    signedAt: Date;
    timeZone?: string;
  },
): MailContent {
  return compose(
    `${input.reportNumber}: signed (${input.meaning}) — ${input.reportTitle} (version ${input.versionNumber})`,
    `Dear ${input.authorName},`,
    [
      `${input.signerName} signed report ${reportLine(input)} on ${mailTime(input.signedAt, input.timeZone)}, meaning: ${input.meaning}.`,
      'The signed version is locked; any correction is a new version that goes through review again.',
      { label: 'Open the report', href: absoluteLink(input.reportPath) },
    ],
  );
}

/** To a person invited to the organisation; `actionPath` carries the one-time token. */
export function invitationMail(input: {
  organisationName: string;
  inviterName: string;
  recipientName?: string;
  actionPath: string;
  expiresAt: Date;
  timeZone?: string;
}): MailContent {
  return compose(
    `Invitation to ${input.organisationName} on Rateledger`,
    input.recipientName ? `Dear ${input.recipientName},` : 'Hello,',
    [
      `${input.inviterName} invites you to join ${input.organisationName} on Rateledger.`,
      { label: 'Accept the invitation and choose your password', href: absoluteLink(input.actionPath) },
      `The link works once and until ${mailTime(input.expiresAt, input.timeZone)}. If you did not expect this invitation, ignore this message.`,
    ],
  );
}

/** To a person who asked to reset their password; `actionPath` carries the one-time token. */
export function passwordResetMail(input: {
  recipientName: string;
  actionPath: string;
  expiresAt: Date;
  timeZone?: string;
}): MailContent {
  return compose('Reset your Rateledger password', `Dear ${input.recipientName},`, [
    'Someone (we hope you) asked to reset the password of your Rateledger account.',
    { label: 'Choose a new password', href: absoluteLink(input.actionPath) },
    `The link works once and until ${mailTime(input.expiresAt, input.timeZone)}. If you did not ask for this, ignore this message: your password stays as it is.`,
  ]);
}

interface SignInLockMail {
  /** Where the failures came from, e.g. "from the address 192.0.2.7". */
  where: string;
  /** What the lock refuses, e.g. "sign-in from that address". */
  refused: string;
  /** Who can still sign in, e.g. "Sign-in from anywhere else is not affected." */
  unaffected: string;
  failures: number;
  lockedUntil: Date;
  /** Further locks within this many minutes are recorded without another message. */
  quietMinutes: number;
  timeZone?: string;
}

/**
 * To the owner of an account whose sign-in was locked after failed attempts; `unlockPath` is a
 * one-time password-reset link (choosing a new password also lifts the lock).
 */
export function signInLockedOwnerMail(
  input: SignInLockMail & { recipientName: string; email: string; unlockPath: string; linkExpiresAt: Date },
): MailContent {
  return compose('Sign-in to your Rateledger account was locked', `Dear ${input.recipientName},`, [
    `${input.failures} attempts to sign in to your Rateledger account (${input.email}) with a wrong password came ${input.where}. Rateledger has locked ${input.refused} until ${mailTime(input.lockedUntil, input.timeZone)}.`,
    input.unaffected,
    'If it was you: wait until then, or choose a new password with the link below — that also unlocks your account at once.',
    'If it was not you: nobody signed in, and your administrators have been told. If your password is one you also use elsewhere, choose a new one with the link.',
    { label: 'Choose a new password and unlock your account', href: absoluteLink(input.unlockPath) },
    `The link works once and until ${mailTime(input.linkExpiresAt, input.timeZone)}. Further locks of your account in the next ${input.quietMinutes} minutes are recorded without another message.`,
  ]);
}

/**
 * To an organisation's administrators (21 CFR 11.300(d): attempts at unauthorised use are reported
 * at once to those responsible): a member's sign-in was locked after failed attempts.
 */
export function signInLockedAdminMail(
  input: SignInLockMail & { memberName: string; memberEmail: string; personPath: string },
): MailContent {
  return compose(`Failed sign-ins: ${input.memberName}'s account locked`, 'Hello,', [
    `${input.failures} attempts to sign in to the account of ${input.memberName} (${input.memberEmail}) with a wrong password came ${input.where}. Rateledger has locked ${input.refused} until ${mailTime(input.lockedUntil, input.timeZone)}. ${input.unaffected}`,
    "The owner was told by e-mail, with a one-time link to choose a new password that also unlocks the account. Every attempt is in the audit trail (actions sign-in.failed, sign-in.refused-locked and account.locked). You can unlock the account sooner on the person's page.",
    { label: `Open ${input.memberName}'s page`, href: absoluteLink(input.personPath) },
    `Further locks of this account in the next ${input.quietMinutes} minutes are recorded in the audit trail without another message.`,
  ]);
}
