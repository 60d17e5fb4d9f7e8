/**
 * Column mappings saved under a name, offered again for the next workbook of the same layout.
 *
 * A mapping's header signature is the text of its sheet's header row (trimmed, trailing blank
 * columns dropped). A saved mapping is offered for a new file when one of the file's sheets has
 * the same signature at the same header row, compared without regard to case or repeated spaces;
 * the offered mapping names that sheet, so a workbook whose sheet was renamed still matches.
 * Mappings with no header row (columns by letter) have no signature and are not offered.
 */
import { desc, eq } from 'drizzle-orm';
import type { SavedMapping } from '../../../shared/api/uploads.ts';
import { type ColumnMapping, columnMappingSchema } from '../../../shared/intake/column-mapping.ts';
import { headerTexts } from '../../../shared/intake/resolve-column.ts';
import type { SheetGrid } from '../../../shared/intake/sheet-grid.ts';
import { appendAuditEvent } from '../../platform/audit/audit-trail.ts';
import type { SessionUser } from '../../platform/auth/roles.ts';
import type { Executor, Transaction } from '../../platform/db/client.ts';
import { savedMappings } from '../../platform/db/schema/index.ts';

/** How many saved mappings of an organisation are considered for a match. */
const MAX_MAPPINGS_CONSIDERED = 500;

/** Header texts of `sheet` at `headerRow`, trailing blanks dropped. */
export function headerSignature(sheet: SheetGrid, headerRow: number): string[] {
  const texts = headerTexts(sheet, headerRow).map((text) => text.trim());
  while (texts.length > 0 && texts[texts.length - 1] === '') texts.pop();
  return texts;
}

function sameSignature(a: readonly string[], b: readonly string[]): boolean {
  const normalise = (text: string) => text.replace(/\s+/g, ' ').toLowerCase();
  return (
    a.length > 0 &&
    a.length === b.length &&
    a.every((text, index) => normalise(text) === normalise(b[index] ?? ''))
  );
}

/** Saved mappings of the organisation that fit one of `sheets`, newest first. */
export async function matchingSavedMappings(
  db: Executor,
  organisationId: number,
  sheets: readonly SheetGrid[],
): Promise<SavedMapping[]> {
  const rows = await db
    .select()
    .from(savedMappings)
    .where(eq(savedMappings.organisationId, organisationId))
    .orderBy(desc(savedMappings.id))
    .limit(MAX_MAPPINGS_CONSIDERED);
  const offers: SavedMapping[] = [];
  // One signature per sheet and header row, however many saved mappings ask for it: working one
  // out reads the width of the whole sheet, which is 100,000 rows in a large workbook.
  const signatures = new Map<string, string[]>();
  const signatureOf = (sheet: SheetGrid, index: number, headerRow: number) => {
    const key = `${index}\u0000${headerRow}`;
    let signature = signatures.get(key);
    if (!signature) {
      signature = headerSignature(sheet, headerRow);
      signatures.set(key, signature);
    }
    return signature;
  };
  for (const row of rows) {
    const parsed = columnMappingSchema.safeParse(row.mapping);
    if (!parsed.success || parsed.data.headerRow < 1) continue;
    const mapping = parsed.data;
    const candidates = sheets
      .map((sheet, index) => ({ sheet, index }))
      .sort((a, b) => Number(b.sheet.name === mapping.sheet) - Number(a.sheet.name === mapping.sheet));
    const match = candidates.find(({ sheet, index }) =>
      sameSignature(signatureOf(sheet, index, mapping.headerRow), row.headerSignature),
    );
    if (match) offers.push({ id: row.id, name: row.name, mapping: { ...mapping, sheet: match.sheet.name } });
  }
  return offers;
}

/** Saves a mapping under a name with its header signature; an audit event in the same transaction. */
export async function saveMapping(
  tx: Transaction,
  actor: SessionUser,
  name: string,
  mapping: ColumnMapping,
  signature: string[],
): Promise<number> {
  const [row] = await tx
    .insert(savedMappings)
    .values({
      organisationId: actor.organisationId,
      name,
      headerSignature: signature,
      mapping,
      createdBy: actor.id,
    })
    .returning({ id: savedMappings.id });
  await appendAuditEvent(tx, {
    organisationId: actor.organisationId,
    actorUserId: actor.id,
    actorLabel: actor.email,
    action: 'column-mapping.saved',
    recordType: 'saved-mapping',
    recordId: row!.id,
    before: null,
    after: { name, headerSignature: signature, mapping },
  });
  return row!.id;
}
