import { asc, eq } from 'drizzle-orm';
import type { Executor } from '../../platform/db/client.ts';
import { signatures, users } from '../../platform/db/schema/index.ts';
import { isoDateTime } from '../reports/index.ts';
import { latestSignedOutput } from '../signing/index.ts';
import { signedPdfPath } from './review-paths.ts';
import { allAssignments } from './review-people.ts';

/**
 * The review page's reads, one function each; `reviewPageModel` runs those that do not depend on
 * each other at the same time. Nothing here writes.
 */

/** Each round's reviewers: the current round's for the state box, all rounds for the history. */
export async function loadRounds(db: Executor, versionId: number, currentRound: number) {
  const rows = await allAssignments(db, versionId);
  const current = rows
    .filter((row) => row.round === currentRound)
    .map(({ id, fullName, email }) => ({ id, fullName, email }));
  const history = [...new Set(rows.map((row) => row.round))].map((round) => ({
    round,
    reviewers: rows
      .filter((row) => row.round === round)
      .map((row) => row.fullName)
      .join(', '),
  }));
  return { current, history, assignments: rows.map((row) => ({ reviewerId: row.id, round: row.round })) };
}

/** The signatures on the version, oldest first, as the page lists them. */
export async function loadSignatureList(db: Executor, versionId: number) {
  const rows = await db
    .select()
    .from(signatures)
    .where(eq(signatures.reportVersionId, versionId))
    .orderBy(asc(signatures.id));
  return rows.map((row) => ({
    name: row.signerPrintedName,
    meaning: row.meaning,
    comment: row.comment,
    signedAtText: `${isoDateTime(row.signedAt, row.timeZone)} (${row.timeZone})`,
    reviewedPdfSha256: row.reviewedPdfSha256,
    signedPdfSha256: row.signedPdfSha256,
    checklistConfirmed: row.checklistConfirmed ?? [],
  }));
}

/** The newest signed PDF of the version with its download link, or null before signing. */
export async function loadSignedOutput(
  db: Executor,
  version: { id: number; reportId: number; versionNumber: number },
) {
  const output = await latestSignedOutput(db, version.id);
  return output
    ? {
        sha256: output.pdfSha256,
        byteSize: output.pdfByteSize,
        downloadUrl: signedPdfPath(version.reportId, version.versionNumber),
      }
    : null;
}

/** The report author's name ('' if the row is gone). */
export async function loadAuthorName(db: Executor, authorId: number): Promise<string> {
  const [row] = await db.select({ fullName: users.fullName }).from(users).where(eq(users.id, authorId));
  return row?.fullName ?? '';
}
