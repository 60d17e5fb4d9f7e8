import { eq } from 'drizzle-orm';
import type { Executor } from '../../platform/db/client.ts';
import { organisationSettings } from '../../platform/db/schema/index.ts';

export const DEFAULT_SIGNATURE_MEANINGS = ['Reviewed', 'Approved'];

/** The organisation's signature meanings (the admin's list, else Reviewed and Approved). */
export async function signatureMeanings(db: Executor, organisationId: number): Promise<string[]> {
  const [row] = await db
    .select({ meanings: organisationSettings.signatureMeanings })
    .from(organisationSettings)
    .where(eq(organisationSettings.organisationId, organisationId));
  const meanings = (row?.meanings ?? []).filter((meaning) => typeof meaning === 'string' && meaning.trim());
  return meanings.length > 0 ? meanings : DEFAULT_SIGNATURE_MEANINGS;
}
