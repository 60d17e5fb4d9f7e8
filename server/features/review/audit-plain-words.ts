/**
 * An audit event of the record under review, said in plain words for the reviewer, who reviews
 * the audit trail with the record (FDA, "Data Integrity and Compliance With Drug CGMP: Questions
 * and Answers", Guidance for Industry, December 2018, Q&A 7 on audit-trail review; paraphrased
 * from memory). Pure; the stored event keeps its code, which the page shows beside the sentence.
 *
 * Example: `{ action: 'review.returned', after: { round: 1, comment: 'Check batch 2' } }` says
 * "Returned to the author (round 1): “Check batch 2”".
 */

import { attributeListChanges } from '../studies/index.ts';

export interface AuditEventForWords {
  action: string;
  recordType: string | null;
  recordId: string | null;
  before: unknown;
  after: unknown;
}

type Values = Record<string, unknown>;

const asValues = (value: unknown): Values =>
  value !== null && typeof value === 'object' && !Array.isArray(value) ? (value as Values) : {};

const text = (value: unknown): string =>
  typeof value === 'string' || typeof value === 'number' ? String(value) : '';

const quoted = (value: unknown): string => (text(value) ? `: “${text(value)}”` : '');

const shortHash = (value: unknown): string => (text(value) ? `${text(value).slice(0, 12)}…` : '');

function reviewers(after: Values): string {
  const list = Array.isArray(after.reviewers) ? (after.reviewers as { name?: unknown }[]) : [];
  return list
    .map((person) => text(person.name))
    .filter(Boolean)
    .join(', ');
}

const listText = (value: unknown): string =>
  Array.isArray(value) ? value.map(text).join(', ') : text(value);

function changedFields(before: Values, after: Values): string {
  const names = [...new Set([...Object.keys(before), ...Object.keys(after)])].filter(
    (key) => JSON.stringify(before[key]) !== JSON.stringify(after[key]) && key !== 'reason',
  );
  // The further attributes of a study change field by field ("Water: upper limit 3 → 5").
  const shown = names
    .flatMap((key) =>
      key === 'additionalAttributes'
        ? attributeListChanges(before[key], after[key]).map(
            (change) =>
              `${change.label} ${listText(change.before) || '—'} → ${listText(change.after) || '—'}`,
          )
        : [`${key} ${text(before[key]) || '—'} → ${text(after[key]) || '—'}`],
    )
    .slice(0, 6);
  return shown.length ? ` (${shown.join('; ')})` : '';
}

const SENTENCES: Record<string, (before: Values, after: Values) => string> = {
  'upload.stored': (_, after) =>
    `Original file stored${quoted(after.fileName)}, SHA-256 ${shortHash(after.sha256)}`,
  'dataset.imported': (_, after) =>
    `Dataset imported from the file (${text(after.pointCount)} points), SHA-256 ${shortHash(after.sha256)}${
      after.duplicateReason ? `; imported again because${quoted(after.duplicateReason)}` : ''
    }`,
  'analysis.run': () => 'Analysis run by the engine',
  'analysis.point-excluded': (_, after) => {
    const list = Array.isArray(after.exclusions) ? (after.exclusions as Values[]) : [];
    const last = list[list.length - 1];
    return `Analysis run again with a point excluded${last ? quoted(last.reason) : ''}`;
  },
  'analysis.retired': (_, after) => `Analysis retired${quoted(after.reason)}`,
  'dataset.retired': (_, after) => `Dataset retired${quoted(after.reason)}`,
  'study.created': () => 'Study created',
  'study.updated': (before, after) => `Study changed${changedFields(before, after)}${quoted(after.reason)}`,
  'report.created': (_, after) => `Report ${text(after.reportNumber)} created`,
  'report-version.created': (_, after) => `Version ${text(after.versionNumber)} requested for rendering`,
  'report-version.rendered': (_, after) => `Version rendered, PDF SHA-256 ${shortHash(after.pdfSha256)}`,
  'report-version.render-failed': (_, after) =>
    `Rendering failed${quoted(after.reason ?? after.failureReason)}`,
  'review.submitted': (_, after) =>
    `Submitted for review (round ${text(after.round)}) to ${reviewers(after) || 'nobody named'}${
      after.note ? ` with the note${quoted(after.note)}` : ''
    }`,
  'review.returned': (_, after) =>
    `Returned to the author (round ${text(after.round)})${quoted(after.comment)}`,
  'report.signed': (_, after) =>
    `Signed by ${text(after.signerPrintedName)} as “${text(after.meaning)}”${
      Array.isArray(after.checklist) && after.checklist.length
        ? `, confirming ${after.checklist.length} checklist item${after.checklist.length === 1 ? '' : 's'}`
        : ''
    }`,
  'signature.failed': (_, after) => `A signing attempt failed (${text(after.reason) || 'wrong credentials'})`,
  'signature.refused-own-report': () => 'The author tried to sign their own report; refused',
  'signature.refused-not-assigned': () => 'Someone not assigned to this round tried to sign; refused',
  'signature.refused-locked': () => 'A signing attempt was refused: signing was locked',
  'review.refused-not-assigned': () => 'Someone not assigned to this round tried to return it; refused',
};

/** The event in one sentence; an action without a sentence of its own is named by its code. */
export function auditEventInWords(event: AuditEventForWords): string {
  const sentence = SENTENCES[event.action];
  if (sentence) return sentence(asValues(event.before), asValues(event.after));
  const record = event.recordType
    ? ` on ${event.recordType.replace('_', ' ')} ${event.recordId ?? ''}`.trimEnd()
    : '';
  return `${event.action.replace(/[.-]/g, ' ')}${record}`;
}
