import { randomBytes } from 'node:crypto';
import { constants } from 'node:fs';
import { mkdir, open, rename, unlink } from 'node:fs/promises';
import path from 'node:path';
import { desc, eq } from 'drizzle-orm';
import type { Executor } from '../../platform/db/client.ts';
import { signedOutputs } from '../../platform/db/schema/index.ts';
import type { ReportContext } from '../reports/index.ts';
import {
  BrowserPool,
  loadRenderRequest,
  type ReportStorage,
  renderReportPdf,
  reportInput,
  sha256Hex,
} from '../reports/index.ts';
import { loadSigningIdentity, type SigningIdentity } from './local-certificate-authority.ts';
import { sealPdf } from './seal-pdf.ts';
import { signingConfigFromEnv } from './signing-config.ts';

/**
 * The signed PDF of a report version: the same report printed again — same analysis run, same
 * template version, same paper — with the signatures page filled in (printed name, meaning, date
 * and time with the organisation's offset and zone, comment), then sealed with the organisation's
 * certificate (PAdES, `sealPdf`) and stored content-addressed beside the other PDFs.
 *
 * Why print again rather than edit the reviewed PDF: the manifestation must be part of the
 * human-readable record itself (21 CFR 11.50(b)), laid out by the same template as the rest; the
 * signature record keeps the reviewed PDF's SHA-256 too, so both files stay linked (11.70).
 *
 * The PDF is written before the database rows that name it (temporary name, fsync, rename), so a
 * row never points at a missing file; a crash in between leaves at most an unreferenced file.
 *
 * One module owns the browser used for this: `signingBrowsers()` starts it on first use and
 * `closeSigningBrowsers()` stops it (shutdown, end of a test file).
 */

export interface SignatureEntry {
  name: string;
  meaning: string;
  signedAt: Date;
  timeZone: string;
  comment: string | null;
  /** The review checklist items the signer confirmed (empty when there was no checklist). */
  checklistConfirmed: string[];
}

const PAPER = { a4: 'A4', letter: 'Letter' } as const;

let pool: BrowserPool | null = null;

/** The browser pool that prints signed PDFs in the web process (one warm Chromium). */
export function signingBrowsers(): BrowserPool {
  pool ??= new BrowserPool({ size: Number(process.env.SIGNING_BROWSERS ?? 1) });
  return pool;
}

export async function closeSigningBrowsers(): Promise<void> {
  const current = pool;
  pool = null;
  await current?.close();
}

/** The organisation's signing identity (local CA or the configured PKCS#12; see `loadSigningIdentity`). */
export function organisationSigningIdentity(organisationName: string): Promise<SigningIdentity> {
  return loadSigningIdentity({ ...signingConfigFromEnv(), organisationName });
}

/**
 * Prints version `versionId` again with `signatures` on its signatures page and seals it.
 * `seal` names the newest signature, written into the PDF signature dictionary.
 */
export async function printSignedPdf(
  db: Executor,
  versionId: number,
  signatures: SignatureEntry[],
  seal: { meaning: string; signerName: string; signingTime: Date; identity: SigningIdentity },
): Promise<{ pdf: Buffer; sha256: string; pageCount: number }> {
  const request = await loadRenderRequest(db, versionId);
  const { context, figures } = reportInput(request);
  // Built as a variable, not an inline literal, so the entries may carry more than the unsigned type names.
  const entries = signatures.map((entry) => ({ ...entry, comment: entry.comment ?? '' }));
  const signed: ReportContext = { ...context, signatures: { ...context.signatures, entries } };
  const printed = await renderReportPdf(signingBrowsers(), {
    template: request.template.source,
    context: signed,
    figures,
    paper: PAPER[request.version.paperSize],
  });
  const pdf = await sealPdf(printed.pdf, {
    identity: seal.identity,
    reason: seal.meaning,
    signerName: seal.signerName,
    location: request.organisation.name,
    signingTime: seal.signingTime,
  });
  return { pdf, sha256: sha256Hex(pdf), pageCount: printed.pageCount };
}

/** Stores a signed PDF content-addressed (`<dir>/<sha[0..2]>/<sha>.pdf`); returns its SHA-256. */
export async function storeSignedPdf(storage: ReportStorage, pdf: Buffer): Promise<string> {
  const sha256 = sha256Hex(pdf);
  if (await storage.hasPdf(sha256)) return sha256;
  const incomingDir = path.join(storage.dir, '.incoming');
  await mkdir(incomingDir, { recursive: true });
  const temporary = path.join(incomingDir, `signed-${randomBytes(8).toString('hex')}.pdf`);
  const handle = await open(temporary, constants.O_WRONLY | constants.O_CREAT | constants.O_EXCL, 0o644);
  try {
    await handle.writeFile(pdf);
    await handle.sync();
  } finally {
    await handle.close();
  }
  const target = storage.pdfPath(sha256);
  try {
    await mkdir(path.dirname(target), { recursive: true });
    await rename(temporary, target);
    const directory = await open(path.dirname(target), constants.O_RDONLY);
    try {
      await directory.sync();
    } finally {
      await directory.close();
    }
  } catch (error) {
    await unlink(temporary).catch(() => undefined);
    throw error;
  }
  return sha256;
}

export type SignedOutput = typeof signedOutputs.$inferSelect;

/** The newest signed output of a version (the one with every signature), or null before signing. */
export async function latestSignedOutput(db: Executor, versionId: number): Promise<SignedOutput | null> {
  const [row] = await db
    .select()
    .from(signedOutputs)
    .where(eq(signedOutputs.reportVersionId, versionId))
    .orderBy(desc(signedOutputs.signatureCount), desc(signedOutputs.id))
    .limit(1);
  return row ?? null;
}
