import { sql } from 'drizzle-orm';
import { type ReviewStandingName, reviewStandingOf } from '../../../shared/api/report-standing.ts';
import type { Executor } from '../../platform/db/client.ts';

/**
 * Where each version of a report stands in review, read beside its render state: the workflow
 * row's state (no row: a draft never submitted), the lowest later version of the report that is
 * signed (which supersedes a signed one), and the newest sealed PDF of a signed version. Reads only.
 */

export interface VersionStanding {
  reviewState: ReviewStandingName;
  supersededBy: number | null;
  signedPdfSha256: string | null;
}

type StandingRow = {
  version_number: number;
  state: 'draft' | 'in_review' | 'returned' | 'signed' | null;
  later_signed: number | null;
  signed_sha256: string | null;
};

/** The lowest later signed version of `v`'s report (`v` is a `report_versions` alias). Fixed text. */
const LATER_SIGNED = `(select min(v2.version_number) from report_versions v2
    join report_reviews r2 on r2.report_version_id = v2.id
    where v2.report_id = v.report_id and v2.version_number > v.version_number and r2.state = 'signed')`;
export const LATER_SIGNED_VERSION = sql.raw(LATER_SIGNED);

/** The standing of version `v` (its review row aliased `rr`), the same rule as `reviewStandingOf`. */
export const VERSION_STANDING = sql.raw(`(case
    when rr.state = 'signed' and ${LATER_SIGNED} is not null then 'superseded'
    else coalesce(rr.state::text, 'draft') end)`);

/** Each version's standing, by version number. */
export async function versionStandings(
  db: Executor,
  reportId: number,
): Promise<Map<number, VersionStanding>> {
  const result = await db.execute<StandingRow>(sql`
    select v.version_number, rr.state, ${LATER_SIGNED_VERSION} as later_signed,
      (select so.pdf_sha256 from signed_outputs so where so.report_version_id = v.id
        order by so.signature_count desc, so.id desc limit 1) as signed_sha256
    from report_versions v
    left join report_reviews rr on rr.report_version_id = v.id
    where v.report_id = ${reportId}`);
  return new Map(
    result.rows.map((row) => {
      const laterSigned = row.later_signed === null ? null : Number(row.later_signed);
      const reviewState = reviewStandingOf(row.state, laterSigned);
      return [
        Number(row.version_number),
        {
          reviewState,
          supersededBy: reviewState === 'superseded' ? laterSigned : null,
          signedPdfSha256: row.state === 'signed' ? row.signed_sha256 : null,
        },
      ];
    }),
  );
}
