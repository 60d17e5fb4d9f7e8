import { execFile } from 'node:child_process';
import type { X509Certificate } from 'node:crypto';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { checkSignatureContents } from './check-signature-contents.ts';
import { certificatesFromPem, nssTrustStore } from './nss-trust-store.ts';
import { type PdfsigSignature, parsePdfsigOutput } from './parse-pdfsig-output.ts';
import { signingConfigFromEnv } from './signing-config.ts';

/**
 * Checks the digital signature(s) of a PDF with Debian's poppler `pdfsig` (NSS inside), trusting
 * the given CA certificate(s), plus a strict look at each signature's /Contents
 * (`checkSignatureContents`). Used for the verification page and the tests: any changed byte of
 * a sealed file — in the pages, the metadata, the cross-reference data or the signature itself —
 * makes `valid` false; bytes appended after the last signature make `wholeDocumentCovered` false.
 *
 * Meaning of the result:
 * - `signed` — pdfsig found at least one signature;
 * - `digestOk` — no signature reports a digest mismatch (the signed bytes are unchanged);
 * - `valid` — every signature is cryptographically valid and intact, and the last one covers the
 *   whole file;
 * - `trusted` — every signer certificate chains to a trusted CA (pdfsig: "Certificate is
 *   Trusted");
 * - `signerSubject`, `signingTime` — of the last signature (the distinguished name as pdfsig
 *   prints it; the claimed time from the signature dictionary, UTC);
 * - `reason` — the verdict in one sentence for a person.
 *
 * pdfsig runs with TZ=UTC, in a private temporary folder, against a cached NSS database (see
 * `nssTrustStore`), killed after `timeoutMs`. pdfsig's own OCSP check stays on (turning it off
 * with -no-ocsp makes pdfsig 22.12 report "Unknown issue with Certificate"); the local CA's
 * certificates name no OCSP responder, so nothing goes to the network for them.
 *
 * Reference: poppler-utils pdfsig(1); ISO 32000-1 §12.8; 21 CFR 11.10(a) ("the ability to
 * discern invalid or altered records").
 *
 * Never throws for bad input (garbage, truncated, unsigned, huge): returns signed:false with a
 * reason. Rejects only when pdfsig or certutil is not installed.
 *
 * Example: await verifyPdfSeal(sealed, { caPem }) → { signed: true, valid: true, trusted: true,
 * digestOk: true, wholeDocumentCovered: true, signerSubject: 'O=Lab,CN=Lab', … }.
 */

export interface VerifyPdfSealOptions {
  /** CA certificate(s) to trust, PEM; '' trusts nothing. */
  caPem: string;
  /** Where NSS databases are cached (default: SIGNING_DIR). */
  cacheDir?: string;
  timeoutMs?: number;
}

export interface SignatureCheck extends PdfsigSignature {
  contentsIntact: boolean;
  contentsProblem?: string;
  signerCertificateSha256?: string;
  /** Trusted because pdfsig trusted the identical certificate on an earlier signature (see below). */
  trustedAsEarlierSignature?: boolean;
}

export interface PdfSealVerification {
  signed: boolean;
  valid: boolean;
  trusted: boolean;
  signerSubject: string | null;
  signerCommonName: string | null;
  signingTime: Date | null;
  digestOk: boolean;
  wholeDocumentCovered: boolean;
  reason: string;
  signatures: SignatureCheck[];
}

const DEFAULT_TIMEOUT_MS = 20_000;
const MAX_OUTPUT_BYTES = 4 * 1024 * 1024;
const VALID = 'Signature is Valid.';
const TRUSTED = 'Certificate is Trusted.';
const UNKNOWN_ISSUE = 'Unknown issue with Certificate or corrupted data.';

/**
 * pdfsig 22.12 reports "Unknown issue with Certificate" for the second and later signatures of
 * one file made with the same certificate (NSS refuses to import the already imported
 * certificate again and poppler reads that leftover error as the verdict; certificates that
 * differ are unaffected — observed here). Trust belongs to the certificate, so a signature whose
 * signer certificate is byte-identical to one pdfsig trusted on an earlier signature of the same
 * file is counted as trusted, and marked so.
 */
function carryTrust(signatures: SignatureCheck[]): void {
  const trustedCertificates = new Set<string>();
  for (const signature of signatures) {
    const fingerprint = signature.signerCertificateSha256;
    if (!fingerprint) continue;
    if (signature.certificateValidation === TRUSTED) trustedCertificates.add(fingerprint);
    else if (signature.certificateValidation === UNKNOWN_ISSUE && trustedCertificates.has(fingerprint)) {
      signature.trustedAsEarlierSignature = true;
    }
  }
}
const isTrusted = (s: SignatureCheck) =>
  s.certificateValidation === TRUSTED || s.trustedAsEarlierSignature === true;

function unsigned(reason: string): PdfSealVerification {
  return {
    signed: false,
    valid: false,
    trusted: false,
    signerSubject: null,
    signerCommonName: null,
    signingTime: null,
    digestOk: false,
    wholeDocumentCovered: false,
    reason,
    signatures: [],
  };
}

function runPdfsig(
  file: string,
  nssDir: string,
  timeoutMs: number,
): Promise<{ stdout: string; stderr: string; timedOut: boolean; missing: boolean }> {
  return new Promise((resolve) => {
    execFile(
      'pdfsig',
      ['-nssdir', nssDir, file],
      {
        timeout: timeoutMs,
        killSignal: 'SIGKILL',
        maxBuffer: MAX_OUTPUT_BYTES,
        env: { ...process.env, TZ: 'UTC', LC_ALL: 'C' },
      },
      (error, stdout, stderr) => {
        const code = (error as NodeJS.ErrnoException | null)?.code;
        resolve({
          stdout,
          stderr,
          timedOut: Boolean(error && (error as { killed?: boolean }).killed),
          missing: code === 'ENOENT',
        });
      },
    );
  });
}

function verdict(
  signatures: SignatureCheck[],
): Pick<PdfSealVerification, 'valid' | 'trusted' | 'digestOk' | 'wholeDocumentCovered' | 'reason'> {
  const last = signatures.at(-1);
  const digestOk = signatures.every((s) => !/digest mismatch/i.test(s.signatureValidation ?? ''));
  const cryptographic = signatures.every((s) => s.signatureValidation === VALID && s.contentsIntact);
  const wholeDocumentCovered = last?.totalDocumentSigned === true;
  const valid = cryptographic && wholeDocumentCovered;
  const trusted = signatures.every(isTrusted);
  const broken = signatures.find((s) => s.signatureValidation !== VALID || !s.contentsIntact);
  let reason: string;
  if (!digestOk)
    reason =
      'The file was changed after it was signed: the signed bytes no longer match the signature (digest mismatch).';
  else if (broken?.signatureValidation !== VALID && broken)
    reason = `Signature #${broken.index} is not valid: ${broken.signatureValidation ?? 'pdfsig gave no verdict'}`;
  else if (broken) reason = `Signature #${broken.index} was altered: ${broken.contentsProblem}.`;
  else if (!wholeDocumentCovered)
    reason = 'Bytes were added after the last signature: it does not cover the whole file.';
  else if (!trusted) {
    const untrusted = signatures.find((s) => !isTrusted(s));
    reason = `The signature is intact, but its certificate is not trusted here: ${untrusted?.certificateValidation ?? 'unknown'}`;
  } else
    reason = 'The signature is valid, covers the whole file, and its certificate chains to the trusted CA.';
  return { valid, trusted, digestOk, wholeDocumentCovered, reason };
}

export async function verifyPdfSeal(
  pdf: Buffer | Uint8Array,
  options: VerifyPdfSealOptions,
): Promise<PdfSealVerification> {
  const bytes = Buffer.from(pdf);
  if (bytes.length === 0) return unsigned('The file is empty.');
  if (!bytes.subarray(0, 1024).includes('%PDF-'))
    return unsigned('The file is not a PDF (no "%PDF-" header).');
  let trusted: X509Certificate[];
  try {
    trusted = certificatesFromPem(options.caPem);
  } catch {
    return unsigned('The trusted CA certificate could not be read.');
  }
  const cacheDir = options.cacheDir ?? signingConfigFromEnv().signingDir;
  const nssDir = await nssTrustStore(options.caPem, cacheDir);
  const folder = mkdtempSync(path.join(os.tmpdir(), 'rateledger-verify-'));
  try {
    const file = path.join(folder, 'document.pdf');
    writeFileSync(file, bytes, { mode: 0o600 });
    const timeoutMs = options.timeoutMs ?? DEFAULT_TIMEOUT_MS;
    const result = await runPdfsig(file, nssDir, timeoutMs);
    if (result.missing) throw new Error('pdfsig is not installed (Debian package poppler-utils).');
    if (result.timedOut) return unsigned(`The signature check did not finish within ${timeoutMs / 1000} s.`);
    const found = parsePdfsigOutput(result.stdout);
    if (found.length === 0) {
      const readable = !/Couldn't read xref|Couldn't find trailer|May not be a PDF/i.test(result.stderr);
      return unsigned(
        readable
          ? 'The PDF carries no digital signature.'
          : 'The file could not be read as a PDF and carries no readable signature.',
      );
    }
    const signatures: SignatureCheck[] = [];
    for (const signature of found) {
      const check = await checkSignatureContents(bytes, signature.signedRanges, trusted);
      signatures.push({
        ...signature,
        contentsIntact: check.intact,
        contentsProblem: check.problem,
        signerCertificateSha256: check.signerCertificateSha256,
      });
    }
    carryTrust(signatures);
    const last = signatures.at(-1);
    return {
      signed: true,
      ...verdict(signatures),
      signerSubject: last?.signerDistinguishedName ?? null,
      signerCommonName: last?.signerCommonName ?? null,
      signingTime: last?.signingTime ?? null,
      signatures,
    };
  } finally {
    rmSync(folder, { recursive: true, force: true });
  }
}
