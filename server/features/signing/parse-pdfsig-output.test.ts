import { describe, expect, it } from 'vitest';
import { parsePdfsigOutput } from './parse-pdfsig-output.ts';

/**
 * The report format is poppler-utils 22.12 `pdfsig` as printed on this machine (Debian 12) for
 * a file sealed twice; the second signature shows the NSS quirk described in verify-pdf.ts.
 */
const twoSignatures = `Digital Signature Info of: sealed2.pdf
Signature #1:
  - Signature Field Name: Rateledger seal 1
  - Signer Certificate Common Name: Northwind Stability Lab
  - Signer full Distinguished Name: O=Northwind Stability Lab,CN=Northwind Stability Lab
  - Signing Time: Jan 02 2026 03:04:05
  - Signing Hash Algorithm: SHA-256
  - Signature Type: ETSI.CAdES.detached
  - Signed Ranges: [0 - 1331], [15669 - 16436]
  - Not total document signed
  - Signature Validation: Signature is Valid.
  - Certificate Validation: Certificate is Trusted.
Signature #2:
  - Signature Field Name: Rateledger seal 2
  - Signer Certificate Common Name: Northwind Stability Lab
  - Signer full Distinguished Name: O=Northwind Stability Lab,CN=Northwind Stability Lab
  - Signing Time: Dec 01 2026 23:19:55
  - Signing Hash Algorithm: SHA-256
  - Signature Type: ETSI.CAdES.detached
  - Signed Ranges: [0 - 16895], [31233 - 31972]
  - Total document signed
  - Signature Validation: Signature is Valid.
  - Certificate Validation: Unknown issue with Certificate or corrupted data.
`;

describe('parsePdfsigOutput', () => {
  it('reads every field of each signature', () => {
    const [first, second] = parsePdfsigOutput(twoSignatures);
    expect(first).toEqual({
      index: 1,
      fieldName: 'Rateledger seal 1',
      signerCommonName: 'Northwind Stability Lab',
      signerDistinguishedName: 'O=Northwind Stability Lab,CN=Northwind Stability Lab',
      signingTime: new Date('2026-01-02T03:04:05Z'),
      hashAlgorithm: 'SHA-256',
      signatureType: 'ETSI.CAdES.detached',
      signedRanges: [
        [0, 1331],
        [15669, 16436],
      ],
      totalDocumentSigned: false,
      signatureValidation: 'Signature is Valid.',
      certificateValidation: 'Certificate is Trusted.',
    });
    expect(second?.totalDocumentSigned).toBe(true);
    expect(second?.signingTime?.toISOString()).toBe('2026-12-01T23:19:55.000Z');
    expect(second?.certificateValidation).toBe('Unknown issue with Certificate or corrupted data.');
  });

  it('finds no signature in the "no signatures" message, in errors, or in nothing', () => {
    expect(parsePdfsigOutput("File 'unsigned.pdf' does not contain any signatures\n")).toEqual([]);
    expect(parsePdfsigOutput("Syntax Error: Couldn't read xref table\n")).toEqual([]);
    expect(parsePdfsigOutput('')).toEqual([]);
  });

  it('leaves an unreadable time undefined instead of inventing one', () => {
    const [signature] = parsePdfsigOutput('Signature #1:\n  - Signing Time: sometime\n');
    expect(signature?.signingTime).toBeUndefined();
    expect(signature?.signedRanges).toEqual([]);
  });
});
