import { z } from 'zod';

/**
 * The boundary of the review checklist an admin keeps (`/admin/review-checklist`): the points a
 * reviewer confirms before signing, one per line, and the reason for the change (recorded with
 * the new version and in the audit trail). An empty list is allowed: it means no checklist.
 */

export const MAX_CHECKLIST_ITEMS = 20;
export const MAX_CHECKLIST_ITEM_LENGTH = 300;
export const MAX_CHECKLIST_REASON_LENGTH = 500;

/** The lines of a textarea (or an array of rows), trimmed, empty ones left out. */
export function checklistLines(raw: unknown): string[] {
  const lines = Array.isArray(raw) ? raw.map(String) : String(raw ?? '').split(/\r?\n/);
  return lines.map((line) => line.trim()).filter((line) => line !== '');
}

const itemList = z.preprocess(
  checklistLines,
  z.array(z.string()).superRefine((items, context) => {
    const problem = (message: string) => context.addIssue({ code: 'custom', message });
    if (items.length > MAX_CHECKLIST_ITEMS)
      return problem(
        `At most ${MAX_CHECKLIST_ITEMS} items; there are ${items.length}. Merge or remove some.`,
      );
    const tooLong = items.findIndex((item) => item.length > MAX_CHECKLIST_ITEM_LENGTH);
    if (tooLong >= 0)
      return problem(
        `Item ${tooLong + 1} has ${items[tooLong]!.length} characters; keep each item to ${MAX_CHECKLIST_ITEM_LENGTH} or fewer.`,
      );
    const seen = new Map<string, number>();
    for (const [index, item] of items.entries()) {
      const earlier = seen.get(item.toLowerCase());
      if (earlier !== undefined)
        return problem(`Item ${index + 1} repeats item ${earlier + 1}; list each point only once.`);
      seen.set(item.toLowerCase(), index);
    }
  }),
);

/** POST /admin/review-checklist */
export const reviewChecklistFormSchema = z.object({
  items: itemList,
  reason: z
    .string({
      error: 'Give the reason for this change; it is recorded with the checklist and in the audit trail.',
    })
    .trim()
    .min(1, 'Give the reason for this change; it is recorded with the checklist and in the audit trail.')
    .max(MAX_CHECKLIST_REASON_LENGTH, `Keep the reason under ${MAX_CHECKLIST_REASON_LENGTH} characters.`),
});
export type ReviewChecklistInput = z.output<typeof reviewChecklistFormSchema>;

/** The current checklist as the pages show it: its version (null before the first) and items. */
export interface ReviewChecklist {
  versionId: number | null;
  versionNumber: number | null;
  items: string[];
}
