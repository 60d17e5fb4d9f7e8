import { eq } from 'drizzle-orm';
import type { Executor } from '../../platform/db/client.ts';
import { organisations } from '../../platform/db/schema/index.ts';
import { HttpError } from '../../platform/http/http-error.ts';

/** The actor's organisation row; 404 if it is gone. */
export async function organisationOf(db: Executor, organisationId: number) {
  const [row] = await db.select().from(organisations).where(eq(organisations.id, organisationId));
  if (!row) throw new HttpError(404, 'Your organisation was not found.');
  return row;
}

/** The organisation's IANA time zone, UTC when it has none. */
export async function organisationTimeZone(db: Executor, organisationId: number): Promise<string> {
  const [row] = await db
    .select({ timeZone: organisations.timeZone })
    .from(organisations)
    .where(eq(organisations.id, organisationId));
  return row?.timeZone ?? 'UTC';
}
