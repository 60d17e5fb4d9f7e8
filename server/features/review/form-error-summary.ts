/**
 * The error summary of a refused sign form (WCAG 3.3.1 Error Identification and 2.4.3 Focus
 * Order; the GOV.UK Design System's "error summary" pattern): one entry per refused field, in the
 * form's order, each linking to the field it is about (the ids review-sign-form.hbs gives its
 * controls). Messages about no field (a reloaded form, a changed record) are listed without a link.
 */

export interface ErrorSummaryEntry {
  message: string;
  /** `#id` of the field, or null when the message is about the form as a whole. */
  href: string | null;
}

/** The sign form's fields in the order it shows them, with the id of the control a link focuses. */
const SIGN_FIELDS: Record<string, string> = {
  meaning: 'sign-meaning',
  comment: 'sign-comment',
  checklistConfirmed: 'sign-checklist-0',
  identity: 'sign-identity',
  password: 'sign-password',
};

export function signFormErrorSummary(errors: Record<string, string>): ErrorSummaryEntry[] {
  const order = Object.keys(SIGN_FIELDS);
  const rank = (field: string) => (field in SIGN_FIELDS ? order.indexOf(field) : order.length);
  return Object.entries(errors)
    .filter(([, message]) => message !== '')
    .sort(([a], [b]) => rank(a) - rank(b))
    .map(([field, message]) => ({ message, href: field in SIGN_FIELDS ? `#${SIGN_FIELDS[field]}` : null }));
}
