import type { ReviewChecklist } from '../../../shared/api/review-checklist.ts';
import type { Executor } from '../../platform/db/client.ts';
import { HttpError } from '../../platform/http/http-error.ts';
import { currentReviewChecklist } from '../settings/index.ts';
import type { SignReportInput } from './signing-context.ts';

/**
 * The review checklist on the sign form (Rateledger issue 13 §4): the signer confirms each item
 * of the organisation's current checklist; the items are recorded with the signature and printed
 * on the signatures page (21 CFR 11.50). An empty checklist is none: the form posts no version.
 */

/** The version id the sign form posts for a checklist: none when it has no items. */
export const checklistVersionOnForm = (checklist: ReviewChecklist): number | null =>
  checklist.items.length > 0 ? checklist.versionId : null;

/** The checklist version a signature confirmed and its items; null when there was no checklist. */
export type ConfirmedChecklist = { versionId: number; items: string[] } | null;

export const CHECKLIST_CHANGED =
  'The checklist changed while you were signing; read it again. Nothing was signed.';

/**
 * Refuses with 409 when the form showed another checklist version than the current one, and with
 * 400 (field `checklistConfirmed`) when an item of the current checklist is not confirmed.
 * Returns the items confirmed (the current checklist's, copied into the signature), or null when
 * there is no checklist.
 */
export function checkChecklistConfirmed(
  current: ReviewChecklist,
  request: Pick<SignReportInput, 'checklistVersionId' | 'checklistConfirmed'>,
): ConfirmedChecklist {
  const expected = checklistVersionOnForm(current);
  if ((request.checklistVersionId ?? null) !== expected) throw new HttpError(409, CHECKLIST_CHANGED);
  if (expected === null) return null;
  const confirmed = new Set(request.checklistConfirmed);
  const missing = current.items.filter((item) => !confirmed.has(item)).length;
  if (missing > 0) {
    const message = `Confirm every point of the checklist before signing: ${missing} of ${current.items.length} ${missing === 1 ? 'is' : 'are'} not ticked.`;
    throw new HttpError(400, 'Some fields are not valid.', [{ field: 'checklistConfirmed', message }]);
  }
  return { versionId: expected, items: [...current.items] };
}

/** Reads the current checklist and checks the form against it (`checkChecklistConfirmed`). */
export async function confirmedChecklist(
  executor: Executor,
  organisationId: number,
  request: Pick<SignReportInput, 'checklistVersionId' | 'checklistConfirmed'>,
): Promise<ConfirmedChecklist> {
  return checkChecklistConfirmed(await currentReviewChecklist(executor, organisationId), request);
}

/** The checklist as the sign form shows it: the version it posts (null when none) and the items. */
export async function signFormChecklist(executor: Executor, organisationId: number) {
  const current = await currentReviewChecklist(executor, organisationId);
  return { versionId: checklistVersionOnForm(current), items: current.items };
}

/**
 * The ticks to show again on a refused sign form, by item text (the form looks each item up).
 * None after a 409: the record or the checklist moved on, so the signer reads it again.
 */
export function typedChecklistTicks(posted: unknown, status: number | undefined): Record<string, true> {
  if (status === 409) return {};
  const items = (Array.isArray(posted) ? posted : posted === undefined ? [] : [posted]).map((item) =>
    String(item).trim(),
  );
  return Object.fromEntries(items.map((item) => [item, true as const]));
}
