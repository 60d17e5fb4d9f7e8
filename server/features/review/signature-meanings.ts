import { eq } from 'drizzle-orm';
import type { Executor } from '../../platform/db/client.ts';
import { organisationSettings } from '../../platform/db/schema/index.ts';
import { DEFAULT_ORGANISATION_SETTINGS } from '../settings/index.ts';

/** The organisation's signature meanings: the admin's list, else the defaults (Reviewed, Approved). */
export async function signatureMeanings(db: Executor, organisationId: number): Promise<string[]> {
  const [row] = await db
    .select({ meanings: organisationSettings.signatureMeanings })
    .from(organisationSettings)
    .where(eq(organisationSettings.organisationId, organisationId));
  const meanings = (row?.meanings ?? []).filter((meaning) => typeof meaning === 'string' && meaning.trim());
  return meanings.length > 0 ? meanings : [...DEFAULT_ORGANISATION_SETTINGS.signatureMeanings];
}
