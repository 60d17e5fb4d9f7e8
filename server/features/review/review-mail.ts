import type { MailMessage } from '../../platform/mail/mail-transport.ts';
import { reportReturnedMail, reportSignedMail, reviewRequestedMail } from '../../platform/mail/messages.ts';
import { reviewPath } from './review-paths.ts';
import type { Reviewer } from './review-people.ts';
import type { ReviewVersion } from './review-version.ts';

/**
 * The messages of the review workflow, sent after the step's transaction commits: the request
 * to each reviewer, and the return and the signature to the author.
 */

const reportLine = (subject: ReviewVersion) => ({
  reportNumber: subject.report.reportNumber,
  reportTitle: subject.report.title,
  versionNumber: subject.version.versionNumber,
  reportPath: reviewPath(subject.report.id, subject.version.versionNumber),
});

const about = (subject: ReviewVersion) => ({ type: 'report_version', id: subject.version.id });

type Person = Pick<Reviewer, 'fullName' | 'email'>;

export function reviewRequestedMessage(
  subject: ReviewVersion,
  input: { author: Person; reviewer: Person; note: string },
): MailMessage {
  return {
    organisationId: subject.report.organisationId,
    kind: 'review-requested',
    to: { name: input.reviewer.fullName, address: input.reviewer.email },
    ...reviewRequestedMail({
      ...reportLine(subject),
      authorName: input.author.fullName,
      reviewerName: input.reviewer.fullName,
      note: input.note,
    }),
    record: about(subject),
  };
}

export function reportReturnedMessage(
  subject: ReviewVersion,
  input: { author: Person; reviewer: Person; comment: string },
): MailMessage {
  return {
    organisationId: subject.report.organisationId,
    kind: 'report-returned',
    to: { name: input.author.fullName, address: input.author.email },
    ...reportReturnedMail({
      ...reportLine(subject),
      authorName: input.author.fullName,
      reviewerName: input.reviewer.fullName,
      comment: input.comment,
    }),
    record: about(subject),
  };
}

export function reportSignedMessage(
  subject: ReviewVersion,
  input: { author: Person; signerName: string; meaning: string; signedAt: Date; timeZone: string },
): MailMessage {
  return {
    organisationId: subject.report.organisationId,
    kind: 'report-signed',
    to: { name: input.author.fullName, address: input.author.email },
    ...reportSignedMail({
      ...reportLine(subject),
      authorName: input.author.fullName,
      signerName: input.signerName,
      meaning: input.meaning,
      signedAt: input.signedAt,
      timeZone: input.timeZone,
    }),
    record: about(subject),
  };
}
