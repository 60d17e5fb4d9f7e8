import { rmSync, writeFileSync } from 'node:fs';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { BrowserPool } from '../../server/features/reports/pdf/browser-pool.ts';
import { reportFixture } from '../../server/features/reports/render/render-fixture.ts';
import { renderReportPdf } from '../../server/features/reports/render/render-report.ts';
import { loadDefaultTemplate } from '../../server/features/reports/render/template-default.ts';
import {
  loadSigningIdentity,
  type SigningIdentity,
} from '../../server/features/signing/local-certificate-authority.ts';
import { nssTrustStore } from '../../server/features/signing/nss-trust-store.ts';
import { sealPdf } from '../../server/features/signing/seal-pdf.ts';
import {
  flipByte,
  lastContents,
  scratchDir,
  tool,
} from '../../server/features/signing/signing-test-support.ts';
import { verifyPdfSeal } from '../../server/features/signing/verify-pdf.ts';

/**
 * The default report printed by Chromium (the render pipeline's own printer) and sealed with a
 * fresh local CA, then checked with Debian's poppler pdfsig, pdfinfo and pdftotext — tools
 * independent of the code that wrote and sealed the PDF.
 */

const pool = new BrowserPool({ size: 1 });
const signingDir = scratchDir('pdf-seal-browser');
let identity: SigningIdentity;
let printed: Buffer;
let sealed: Buffer;
let nssDir: string;
const file = (name: string, bytes: Buffer) => {
  const target = path.join(signingDir, name);
  writeFileSync(target, bytes);
  return target;
};

beforeAll(async () => {
  const fixture = reportFixture();
  const result = await renderReportPdf(pool, {
    template: loadDefaultTemplate(),
    context: fixture.context,
    figures: fixture.figures,
    paper: 'A4',
  });
  printed = Buffer.from(result.pdf);
  identity = await loadSigningIdentity({
    signingDir,
    organisationName: 'Northwind Stability Lab (invented)',
  });
  nssDir = await nssTrustStore(identity.caPem, signingDir);
  sealed = await sealPdf(printed, {
    identity,
    reason: 'Approved',
    signerName: 'Ilse Varga (invented)',
    location: 'QC',
  });
});
afterAll(async () => {
  await pool.close();
  rmSync(signingDir, { recursive: true, force: true });
});

describe('a Chromium-printed report, sealed', () => {
  it('pdfsig: valid, whole document, trusted with the local CA', () => {
    const report = tool('pdfsig', ['-nssdir', nssDir, file('sealed.pdf', sealed)]);
    expect(report).toContain('Signature is Valid.');
    expect(report).toContain('Total document signed');
    expect(report).toContain('Certificate is Trusted.');
    expect(report).toContain('Signature Type: ETSI.CAdES.detached');
  });

  it('keeps every printed byte, the page count, metadata and text (pdfinfo, pdftotext)', () => {
    expect(sealed.subarray(0, printed.length).equals(printed)).toBe(true);
    const info = (target: string) =>
      tool('pdfinfo', [target])
        .split('\n')
        .filter((line) =>
          /^(Title|Author|Subject|Keywords|Creator|Producer|Tagged|Pages|CreationDate):/.test(line),
        );
    const before = file('printed.pdf', printed);
    const after = file('sealed-copy.pdf', sealed);
    expect(info(after)).toEqual(info(before));
    expect(info(after).some((line) => line.startsWith('Tagged:') && line.endsWith('yes'))).toBe(true);
    expect(tool('pdftotext', [after, '-'])).toBe(tool('pdftotext', [before, '-']));
  });

  it('verifyPdfSeal: valid and trusted; an unsigned print is signed:false', async () => {
    const result = await verifyPdfSeal(sealed, { caPem: identity.caPem, cacheDir: signingDir });
    expect(result).toMatchObject({
      signed: true,
      valid: true,
      trusted: true,
      digestOk: true,
      wholeDocumentCovered: true,
    });
    expect(result.signerCommonName).toBe('Northwind Stability Lab (invented)');
    expect((await verifyPdfSeal(printed, { caPem: identity.caPem, cacheDir: signingDir })).signed).toBe(
      false,
    );
  });

  it('one changed byte — in a page, the metadata or the signature — fails verification', async () => {
    const [start, end] = lastContents(sealed);
    const positions = {
      page: Math.floor(printed.length / 2),
      metadata: sealed.indexOf('/Producer') + 12,
      signature: start + 1 + 2 * 600,
      padding: end - 4,
    };
    for (const [where, position] of Object.entries(positions)) {
      const result = await verifyPdfSeal(flipByte(sealed, position), {
        caPem: identity.caPem,
        cacheDir: signingDir,
      });
      expect({ where, valid: result.valid }).toEqual({ where, valid: false });
    }
    const pageReport = tool('pdfsig', [
      '-nssdir',
      nssDir,
      file('flipped.pdf', flipByte(sealed, positions.page)),
    ]);
    expect(pageReport).toContain('Digest Mismatch.');
  });
});
