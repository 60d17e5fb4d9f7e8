/**
 * The same upload imported again with the same mapping gives the same series: a second, identical
 * dataset that only makes the record ambiguous (which one did the analysis use?). Such an import
 * is refused (409, naming the dataset that exists) unless the analyst gives a reason, which is then
 * kept in the new dataset's audit event beside the dataset it repeats.
 *
 * "The same mapping" is jsonb equality of the stored mapping (PostgreSQL compares jsonb by value,
 * whatever the key order). The check runs inside the import's transaction under an advisory lock
 * on the upload, so two imports sent at once cannot both pass it.
 */
import { and, desc, eq, sql } from 'drizzle-orm';
import type { ColumnMapping } from '../../../shared/intake/column-mapping.ts';
import type { Executor } from '../../platform/db/client.ts';
import { datasets, users } from '../../platform/db/schema/index.ts';
import { HttpError } from '../../platform/http/http-error.ts';

/** Advisory-lock namespace of dataset imports (any fixed number; keyed with the upload id). */
const IMPORT_LOCK_NAMESPACE = 7_310_013;

/** Returns the id of the dataset this import repeats (allowed by a reason), or null. */
export async function checkDuplicateImport(
  tx: Executor,
  input: { uploadId: number; mapping: ColumnMapping; reason: string | undefined },
): Promise<number | null> {
  await tx.execute(sql`select pg_advisory_xact_lock(${IMPORT_LOCK_NAMESPACE}, ${input.uploadId})`);
  const [existing] = await tx
    .select({ id: datasets.id, createdAt: datasets.createdAt, createdBy: users.fullName })
    .from(datasets)
    .innerJoin(users, eq(users.id, datasets.createdBy))
    .where(
      and(
        eq(datasets.uploadId, input.uploadId),
        sql`${datasets.mapping} = ${JSON.stringify(input.mapping)}::jsonb`,
      ),
    )
    .orderBy(desc(datasets.id))
    .limit(1);
  if (!existing) return null;
  if (input.reason !== undefined && input.reason.trim() !== '') return existing.id;
  const when = `${existing.createdAt.toISOString().replace('T', ' ').slice(0, 16)} UTC`;
  throw new HttpError(
    409,
    `This upload was already imported with this mapping as dataset #${existing.id} (${when}, by ${existing.createdBy}); importing it again would only make a second identical dataset. Use dataset #${existing.id}, or give a reason to import it again.`,
    { existingDatasetId: existing.id },
  );
}
