import { createHash, X509Certificate } from 'node:crypto';
import * as asn1js from 'asn1js';
import * as pkijs from 'pkijs';
import { pkijsEngine, toArrayBuffer } from './pkijs-engine.ts';

/**
 * A strict second look at one signature's /Contents, beside pdfsig's verdict. The /Contents
 * hex string is the one part of a signed PDF that its own signature cannot cover, and pdfsig
 * (NSS) tolerates changes there that do not stop the signature from verifying — a changed digit
 * in the zero padding after the CMS, or in an embedded copy of a certificate. This check makes
 * any changed byte there count as a failure:
 * 1. the gap between the two byte ranges is exactly `<hex digits>`;
 * 2. the hex decodes to one DER-encoded CMS ContentInfo followed only by zero bytes, and
 *    re-encoding the parsed structure gives back exactly those bytes (no lenient BER);
 * 3. the SignedData verifies over the signed byte ranges (message digest and signature);
 * 4. every certificate embedded in it is signed by its issuer, where the issuer (embedded, or
 *    one of the trusted CA certificates, or itself when self-signed) is present.
 *
 * Reference: RFC 5652 §5 (SignedData), ITU-T X.690 §10 (DER), ISO 32000-1 §12.8.1 (the
 * /Contents and /ByteRange of a signature).
 *
 * Never throws: returns { intact: false, problem } with the first failure found.
 *
 * Example: await checkSignatureContents(sealedPdf, [[0, 1331], [15669, 16436]], [ca]) →
 * { intact: true }.
 */

export interface ContentsCheck {
  intact: boolean;
  problem?: string;
  /** SHA-256 (hex) of the signer's certificate, when the signature verified. */
  signerCertificateSha256?: string;
}

function certificateSignaturesHold(
  embedded: X509Certificate[],
  trusted: X509Certificate[],
): string | undefined {
  for (const certificate of embedded) {
    // Candidates by name only: OpenSSL's checkIssued also rejects an issuer whose key type does
    // not match the certificate's signature algorithm, which would hide a changed algorithm byte.
    const issuers = [...embedded, ...trusted].filter((candidate) => candidate.subject === certificate.issuer);
    if (issuers.length === 0) continue; // unknown issuer: a trust question, answered by pdfsig
    if (!issuers.some((issuer) => certificate.verify(issuer.publicKey))) {
      return `the embedded certificate "${certificate.subject.replace(/\n/g, ', ')}" does not verify against its issuer`;
    }
  }
  return undefined;
}

export async function checkSignatureContents(
  pdf: Buffer,
  ranges: [number, number][],
  trusted: X509Certificate[],
): Promise<ContentsCheck> {
  const fail = (problem: string): ContentsCheck => ({ intact: false, problem });
  try {
    const [first, second] = ranges;
    if (ranges.length !== 2 || !first || !second) return fail('the signature does not have two byte ranges');
    const [gapStart, gapEnd] = [first[1], second[0]];
    if (first[0] !== 0 || gapStart >= gapEnd || second[1] > pdf.length)
      return fail('the byte ranges are malformed');
    const hex = pdf.subarray(gapStart, gapEnd).toString('latin1');
    if (!/^<([0-9A-Fa-f]{2})+>$/.test(hex)) return fail('the signature contents are not a hex string');
    const bytes = Buffer.from(hex.slice(1, -1), 'hex');
    const parsed = asn1js.fromBER(toArrayBuffer(bytes));
    if (parsed.offset === -1) return fail('the signature contents are not valid ASN.1');
    const padding = bytes.subarray(parsed.offset);
    if (padding.some((byte) => byte !== 0)) return fail('the padding after the signature was altered');
    if (!Buffer.from(parsed.result.toBER(false)).equals(bytes.subarray(0, parsed.offset))) {
      return fail('the signature is not in canonical DER form');
    }
    const contentInfo = new pkijs.ContentInfo({ schema: parsed.result });
    const signedData = new pkijs.SignedData({ schema: contentInfo.content });
    const data = Buffer.concat([pdf.subarray(first[0], first[1]), pdf.subarray(second[0], second[1])]);
    const verified = await signedData
      .verify({ signer: 0, data: toArrayBuffer(data), checkChain: false, extendedMode: true }, pkijsEngine)
      .catch(() => undefined);
    if (!verified?.signatureVerified || !verified.signerCertificate) {
      return fail('the signature does not verify over the signed bytes');
    }
    const signerCertificateSha256 = createHash('sha256')
      .update(Buffer.from(verified.signerCertificate.toSchema().toBER(false)))
      .digest('hex');
    const embedded = (signedData.certificates ?? [])
      .filter((item): item is pkijs.Certificate => item instanceof pkijs.Certificate)
      .map((item) => new X509Certificate(Buffer.from(item.toSchema().toBER(false))));
    const broken = certificateSignaturesHold(embedded, trusted);
    if (broken) return fail(broken);
    return { intact: true, signerCertificateSha256 };
  } catch (error) {
    return fail(`the signature contents cannot be read (${(error as Error).message})`);
  }
}
