import { type AuditEventForWords, auditEventInWords } from '../review/index.ts';

/**
 * A person's own audit event in plain words for the dashboard and the activity list, instead of
 * its code (`analysis.point-excluded`). Events of records (uploads, datasets, analyses, studies,
 * reports, reviews, signatures) are said by the review feature's `auditEventInWords`, so each
 * record event has one sentence wherever it is shown; the account, people and template events,
 * which no record review shows, are said here. An unknown code still reads as words.
 *
 * Example: `{ action: 'sign-in.refused-locked', … }` → "Sign-in refused: the account was locked".
 */
const ACCOUNT_SENTENCES: Record<string, string> = {
  'sign-in': 'Signed in',
  'sign-out': 'Signed out',
  'sign-in.failed': 'Sign-in failed',
  'sign-in.refused-locked': 'Sign-in refused: the account was locked',
  'account.locked': 'Account locked after failed sign-ins',
  'password.reset-requested': 'Password reset requested',
  'password.reset': 'Password reset',
  'invitation.accepted': 'Invitation accepted',
  'invitation.revoked': 'Invitation withdrawn',
  'user.invited': 'Person invited',
  'user.deactivated': 'Person deactivated',
  'user.reactivated': 'Person reactivated',
  'user.roles-changed': 'Roles changed',
  'user.unlocked': 'Account unlocked',
  'column-mapping.saved': 'Column mapping saved',
  'organisation.seeded': 'Demonstration organisation set up',
  'report-template.version-created': 'Report template version drafted',
  'report-template.published': 'Report template published',
  'report-template.rolled-back': 'Report template rolled back',
};

export function activityInWords(event: AuditEventForWords): string {
  return ACCOUNT_SENTENCES[event.action] ?? auditEventInWords(event);
}
