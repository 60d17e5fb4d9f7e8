import { createHash } from 'node:crypto';
import { SignPdf } from '@signpdf/signpdf';
import { addSignaturePlaceholder } from './add-signature-placeholder.ts';
import type { SigningIdentity } from './local-certificate-authority.ts';
import { PadesSigner } from './pades-signer.ts';
import { PdfSealError } from './pdf-seal-error.ts';
import { type Pkcs12Contents, readPkcs12 } from './pkcs12.ts';

/**
 * Seals a PDF with the organisation's certificate: a PAdES baseline B-B signature (SubFilter
 * ETSI.CAdES.detached; CMS with signing-certificate-v2, see `pades-signer.ts`) appended as an
 * incremental update (see `add-signature-placeholder.ts`), so every original byte — the visible
 * pages and the document metadata — is kept, and the signature covers the whole file as it then
 * is. Changing any byte afterwards makes the digest check of a verifier (poppler's `pdfsig`,
 * `verifyPdfSeal`) fail; 21 CFR 11.70 asks for exactly such a link between signature and
 * record, and EU GMP Annex 11 §14(b) for a signature "permanently linked to" its record.
 *
 * The signature dictionary records the signer's printed name (/Name), the meaning (/Reason),
 * the place (/Location), a contact (/ContactInfo) and the signing time (/M, UTC); this claimed
 * time comes from the server clock — there is no trusted timestamp (PAdES B-T) here.
 *
 * Reference: ETSI EN 319 142-1 V1.1.1 (PAdES baseline), ISO 32000-1 §12.8 (digital signatures).
 *
 * Throws PdfSealError: 'not-pdf', 'encrypted', 'no-pages', 'unreadable' for input that cannot be
 * sealed; 'signature-too-large' if the CMS outgrows its reserved space (a very long chain).
 *
 * Example: await sealPdf(pdf, { identity, reason: 'Approved', signerName: 'A. Reviewer' }) →
 * pdf followed by one update section; pdfsig then says "Signature is Valid", "Total document
 * signed".
 */

export interface SealPdfOptions {
  identity: SigningIdentity;
  /** The meaning of the signature, e.g. "Approved". */
  reason: string;
  /** The signer's printed name. */
  signerName: string;
  location?: string;
  contactInfo?: string;
  /** Claimed signing time, written as /M (default now). */
  signingTime?: Date;
}

/** Room for the CMS structure, signed attributes and an RSA-4096 signature, beyond the certificates. */
const SIGNATURE_OVERHEAD_BYTES = 4096;
const KEY_CACHE_LIMIT = 16;
const opened = new Map<string, Pkcs12Contents>();

function openIdentity(identity: SigningIdentity): Pkcs12Contents {
  const key = createHash('sha256')
    .update(identity.p12)
    .update('\0')
    .update(identity.passphrase)
    .digest('hex');
  let contents = opened.get(key);
  if (!contents) {
    contents = readPkcs12(identity.p12, identity.passphrase);
    if (opened.size >= KEY_CACHE_LIMIT) opened.delete(opened.keys().next().value as string);
    opened.set(key, contents);
  }
  return contents;
}

export async function sealPdf(pdf: Buffer | Uint8Array, options: SealPdfOptions): Promise<Buffer> {
  const contents = openIdentity(options.identity);
  const certificateBytes = [contents.certificate, ...contents.chain].reduce(
    (sum, c) => sum + c.raw.length,
    0,
  );
  const signatureLength = Math.ceil((certificateBytes + SIGNATURE_OVERHEAD_BYTES) / 1024) * 1024;
  const prepared = await addSignaturePlaceholder(Buffer.from(pdf), {
    reason: options.reason,
    name: options.signerName,
    location: options.location ?? '',
    contactInfo: options.contactInfo ?? '',
    signingTime: options.signingTime ?? new Date(),
    signatureLength,
  });
  const signer = new PadesSigner({
    privateKey: contents.privateKey,
    certificate: contents.certificate,
    chain: contents.chain,
  });
  try {
    return await new SignPdf().sign(prepared, signer);
  } catch (error) {
    if (/exceeds placeholder/.test((error as Error).message)) {
      throw new PdfSealError('signature-too-large', (error as Error).message, { cause: error });
    }
    throw error;
  }
}
