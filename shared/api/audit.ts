/**
 * The audit trail viewer's filter: what a reviewer or administrator narrows the trail by, read
 * from the query string of `GET /audit` and `GET /audit/export.csv` (the same filter feeds both,
 * so the export holds exactly the events the screen lists).
 *
 * A GET form sends every field, blank ones as empty strings; blank means "any". Dates are calendar
 * days (`YYYY-MM-DD`, what `<input type="date">` sends) in the organisation's time zone, both ends
 * included. Refused: a user id that is not a whole number, an impossible date, `from` after `to`,
 * a repeated field (`?action=a&action=b`), text longer than the column could hold.
 *
 * Example: `auditFilterSchema.parse({ user: '', action: 'study.updated', from: '2025-03-01',
 * to: '', page: '2' })` gives `{ action: 'study.updated', from: '2025-03-01', page: 2 }`.
 */
import { z } from 'zod';

/** Events per page of the viewer; the export has no page size (it streams every match). */
export const AUDIT_PAGE_SIZE = 50;

const blankIsAbsent = (raw: unknown) => (typeof raw === 'string' && raw.trim() === '' ? undefined : raw);

const optionalText = (label: string, max: number) =>
  z.preprocess(
    blankIsAbsent,
    z
      .string({ error: `${label} must be given once, as text.` })
      .trim()
      .max(max, `${label} can be at most ${max} characters.`)
      .optional(),
  );

const optionalDay = (label: string) =>
  z.preprocess(
    blankIsAbsent,
    z.iso.date({ error: `${label} must be a calendar date written YYYY-MM-DD, e.g. 2025-03-14.` }).optional(),
  );

export const auditFilterSchema = z
  .object({
    user: z.preprocess(
      blankIsAbsent,
      z.coerce
        .number({ error: 'Choose a person from the list.' })
        .int('Choose a person from the list.')
        .positive('Choose a person from the list.')
        .max(2_147_483_647, 'Choose a person from the list.')
        .optional(),
    ),
    actor: optionalText('Actor text', 200),
    action: optionalText('Action', 120),
    recordType: optionalText('Record type', 120),
    recordId: optionalText('Record id', 120),
    from: optionalDay('From'),
    to: optionalDay('To'),
    page: z.preprocess(
      blankIsAbsent,
      z.coerce
        .number({ error: 'The page must be a number.' })
        .int('The page must be a whole number.')
        .min(1, 'The page must be 1 or more.')
        .max(1_000_000, 'The page is too large.')
        .default(1),
    ),
  })
  .refine((filter) => !filter.from || !filter.to || filter.from <= filter.to, {
    path: ['to'],
    message: 'The "to" date must be on or after the "from" date.',
  });

export type AuditFilterInput = z.input<typeof auditFilterSchema>;
export type AuditFilter = z.output<typeof auditFilterSchema>;

/** The fields of the filter that narrow the events (all but the page), in form order. */
export const AUDIT_FILTER_FIELDS = [
  'user',
  'actor',
  'action',
  'recordType',
  'recordId',
  'from',
  'to',
] as const;

/**
 * The query string that reproduces a filter (for page links and the export link); absent fields
 * are left out. Example: `{ action: 'sign-in', page: 3 }` → `action=sign-in&page=3`.
 */
export function auditFilterQuery(filter: Partial<AuditFilter>, page?: number): string {
  const params = new URLSearchParams();
  for (const field of AUDIT_FILTER_FIELDS) {
    const value = filter[field];
    if (value !== undefined && value !== '') params.set(field, String(value));
  }
  if (page !== undefined && page > 1) params.set('page', String(page));
  return params.toString();
}

/** Field name → first message, shown beside the filter field. */
export function auditFilterErrors(error: z.ZodError): Record<string, string> {
  const errors: Record<string, string> = {};
  for (const issue of error.issues) errors[String(issue.path[0] ?? 'form')] ??= issue.message;
  return errors;
}
