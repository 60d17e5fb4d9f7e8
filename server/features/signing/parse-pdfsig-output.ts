/**
 * Reads the report of poppler's `pdfsig <file>` (poppler-utils 22.12) into one record per
 * signature. pdfsig prints, per signature, lines such as
 *   Signature #1:
 *     - Signer full Distinguished Name: O=Lab,CN=Lab
 *     - Signing Time: Jan 02 2026 03:04:05
 *     - Signed Ranges: [0 - 1331], [15669 - 16436]
 *     - Total document signed            (or "Not total document signed")
 *     - Signature Validation: Signature is Valid.
 *     - Certificate Validation: Certificate is Trusted.
 * and "File '…' does not contain any signatures" when there are none. The signing time is in
 * the time zone of the pdfsig process — run it with TZ=UTC and this parser reads it as UTC.
 *
 * Reference: poppler utils/pdfsig.cc (gitlab.freedesktop.org/poppler/poppler), its printing of
 * SignatureInfo; the exact wording was observed with Debian's poppler-utils 22.12.
 *
 * Never throws: unknown lines are ignored, a missing field stays undefined.
 *
 * Example: parsePdfsigOutput('Signature #1:\n  - Total document signed\n')[0].totalDocumentSigned
 * → true.
 */

export interface PdfsigSignature {
  index: number;
  fieldName?: string;
  signerCommonName?: string;
  signerDistinguishedName?: string;
  signingTime?: Date;
  hashAlgorithm?: string;
  signatureType?: string;
  /** Byte ranges as pdfsig prints them: [start, end) pairs. */
  signedRanges: [number, number][];
  totalDocumentSigned?: boolean;
  /** e.g. "Signature is Valid.", "Digest Mismatch.", "Signature is Invalid." */
  signatureValidation?: string;
  /** e.g. "Certificate is Trusted.", "Certificate issuer is unknown." */
  certificateValidation?: string;
}

const MONTHS = ['Jan', 'Feb', 'Mar', 'Apr', 'May', 'Jun', 'Jul', 'Aug', 'Sep', 'Oct', 'Nov', 'Dec'];

function parseTime(text: string): Date | undefined {
  const match = /^([A-Z][a-z]{2}) (\d{1,2}) (\d{4}) (\d{2}):(\d{2}):(\d{2})$/.exec(text.trim());
  if (!match) return undefined;
  const month = MONTHS.indexOf(match[1] ?? '');
  if (month < 0) return undefined;
  const [year, day, hour, minute, second] = [match[3], match[2], match[4], match[5], match[6]].map(
    Number,
  ) as number[];
  return new Date(Date.UTC(year ?? 0, month, day, hour, minute, second));
}

export function parsePdfsigOutput(output: string): PdfsigSignature[] {
  const signatures: PdfsigSignature[] = [];
  let current: PdfsigSignature | undefined;
  for (const rawLine of output.split(/\r?\n/)) {
    const header = /^Signature #(\d+):/.exec(rawLine);
    if (header) {
      current = { index: Number(header[1]), signedRanges: [] };
      signatures.push(current);
      continue;
    }
    const line = /^\s+- (.*)$/.exec(rawLine)?.[1]?.trim();
    if (!current || line === undefined) continue;
    if (line === 'Total document signed') current.totalDocumentSigned = true;
    else if (line === 'Not total document signed') current.totalDocumentSigned = false;
    const separator = line.indexOf(': ');
    if (separator < 0) continue;
    const key = line.slice(0, separator);
    const value = line.slice(separator + 2).trim();
    if (key === 'Signature Field Name') current.fieldName = value;
    else if (key === 'Signer Certificate Common Name') current.signerCommonName = value;
    else if (key === 'Signer full Distinguished Name') current.signerDistinguishedName = value;
    else if (key === 'Signing Time') current.signingTime = parseTime(value);
    else if (key === 'Signing Hash Algorithm') current.hashAlgorithm = value;
    else if (key === 'Signature Type') current.signatureType = value;
    else if (key === 'Signature Validation') current.signatureValidation = value;
    else if (key === 'Certificate Validation') current.certificateValidation = value;
    else if (key === 'Signed Ranges') {
      current.signedRanges = [...value.matchAll(/\[(\d+) - (\d+)\]/g)].map((m) => [
        Number(m[1]),
        Number(m[2]),
      ]);
    }
  }
  return signatures;
}
