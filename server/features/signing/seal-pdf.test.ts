import { mkdirSync, rmSync, writeFileSync } from 'node:fs';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { loadSigningIdentity, type SigningIdentity } from './local-certificate-authority.ts';
import { nssTrustStore } from './nss-trust-store.ts';
import { PdfSealError } from './pdf-seal-error.ts';
import { sealPdf } from './seal-pdf.ts';
import { flipByte, lastContents, samplePdf, scratchDir, tool } from './signing-test-support.ts';
import { verifyPdfSeal } from './verify-pdf.ts';

/**
 * Sealing PDFs made with pdf-lib, checked with tools outside this code: poppler's pdfsig (NSS),
 * pdfinfo and pdftotext (Debian poppler-utils 22.12) and `openssl cms` (OpenSSL 3). The
 * Chromium-printed report is sealed in tests/browser/pdf-seal.browser.test.ts.
 */

const signingDir = scratchDir('seal');
const files = path.join(signingDir, 'files');
let identity: SigningIdentity;
let original: Buffer;
let sealed: Buffer;
let nssDir: string;
const signingTime = new Date('2026-03-04T05:06:07Z');

const write = (name: string, bytes: Buffer) => {
  const file = path.join(files, name);
  writeFileSync(file, bytes);
  return file;
};
const pdfsig = (file: string) => tool('pdfsig', ['-nssdir', nssDir, file], { TZ: 'UTC' });

beforeAll(async () => {
  mkdirSync(files);
  identity = await loadSigningIdentity({
    signingDir,
    organisationName: 'Northwind Stability Lab (invented)',
  });
  nssDir = await nssTrustStore(identity.caPem, signingDir);
  original = await samplePdf();
  sealed = await sealPdf(original, {
    identity,
    reason: 'Approved',
    signerName: 'Ilse Varga-Ñuñez',
    location: 'QC laboratory',
    contactInfo: 'qa@example.invalid',
    signingTime,
  });
}, 60_000);
afterAll(() => rmSync(signingDir, { recursive: true, force: true }));

describe('sealPdf', () => {
  it('gives a signature pdfsig calls valid, whole-document and trusted (poppler pdfsig)', () => {
    const report = pdfsig(write('sealed.pdf', sealed));
    expect(report).toContain('Signature is Valid.');
    expect(report).toContain('Total document signed');
    expect(report).toContain('Certificate is Trusted.');
    expect(report).toContain('Signature Type: ETSI.CAdES.detached');
    expect(report).toContain('Signing Hash Algorithm: SHA-256');
    expect(report).toContain('Signer Certificate Common Name: Northwind Stability Lab (invented)');
    expect(report).toContain('Signing Time: Mar 04 2026 05:06:07');
  });

  it('without the CA in the trust store, pdfsig still finds it valid but not trusted', async () => {
    const emptyStore = await nssTrustStore('', signingDir);
    const report = tool('pdfsig', ['-nssdir', emptyStore, write('untrusted.pdf', sealed)]);
    expect(report).toContain('Signature is Valid.');
    expect(report).not.toContain('Certificate is Trusted.');
  });

  it('is an incremental update: the original bytes, text and metadata are unchanged (pdfinfo, pdftotext)', () => {
    expect(sealed.subarray(0, original.length).equals(original)).toBe(true);
    const before = write('original.pdf', original);
    const after = write('sealed-info.pdf', sealed);
    const info = (file: string) =>
      tool('pdfinfo', [file])
        .split('\n')
        .filter((line) => /^(Title|Author|Producer|Pages|Page size):/.test(line));
    expect(info(after)).toEqual(info(before));
    expect(info(after)).toContain('Title:           Stability report VTZ-0042 (invented)');
    expect(tool('pdftotext', [after, '-'])).toBe(tool('pdftotext', [before, '-']));
  });

  it('makes a PAdES B-B CMS: signing-certificate-v2, no CMS signing time (openssl cms)', () => {
    const [start, end] = lastContents(sealed);
    const der = Buffer.from(sealed.subarray(start + 1, end).toString('latin1'), 'hex');
    const printed = tool('openssl', [
      'cms',
      '-cmsout',
      '-print',
      '-inform',
      'DER',
      '-in',
      write('cms.der', der),
    ]);
    expect(printed).toContain('id-smime-aa-signingCertificateV2');
    expect(printed).toContain('messageDigest');
    expect(printed).not.toContain('signingTime');
    expect(printed).toContain('eContent: <ABSENT>'); // detached
  });

  it('verifyPdfSeal agrees, with the signer and the signing time', async () => {
    const result = await verifyPdfSeal(sealed, { caPem: identity.caPem, cacheDir: signingDir });
    expect(result).toMatchObject({
      signed: true,
      valid: true,
      trusted: true,
      digestOk: true,
      wholeDocumentCovered: true,
    });
    expect(result.signerCommonName).toBe('Northwind Stability Lab (invented)');
    expect(result.signerSubject).toContain('CN=Northwind Stability Lab (invented)');
    expect(result.signingTime?.toISOString()).toBe(signingTime.toISOString());
    expect(result.signatures).toHaveLength(1);
  });

  it('seals PDFs with a cross-reference stream, and seals a sealed PDF again', async () => {
    const compact = await samplePdf({ objectStreams: true });
    const once = await sealPdf(compact, { identity, reason: 'Reviewed', signerName: 'R. Okafor' });
    const twice = await sealPdf(once, { identity, reason: 'Approved', signerName: 'L. Brandt' });
    const report = pdfsig(write('twice.pdf', twice));
    expect(report.match(/Signature is Valid\./g)).toHaveLength(2);
    expect(report).toContain('Not total document signed'); // the first no longer covers the end
    const result = await verifyPdfSeal(twice, { caPem: identity.caPem, cacheDir: signingDir });
    expect(result).toMatchObject({ signed: true, valid: true, trusted: true, wholeDocumentCovered: true });
    expect(result.signatures.map((s) => s.totalDocumentSigned)).toEqual([false, true]);
  });

  it('refuses what is not a PDF with a typed error', async () => {
    const attempt = sealPdf(Buffer.from('hello, not a pdf'), {
      identity,
      reason: 'Approved',
      signerName: 'X',
    });
    await expect(attempt).rejects.toBeInstanceOf(PdfSealError);
    await expect(attempt).rejects.toMatchObject({ code: 'not-pdf' });
  });
});

describe('changing one byte of a sealed PDF', () => {
  const positions = (): Record<string, number> => {
    const [start, end] = lastContents(sealed);
    // The CMS starts "3082LLLL": a SEQUENCE with a two-byte length (X.690 §8.1.3.5).
    const derLength = Number.parseInt(sealed.subarray(start + 5, start + 9).toString('latin1'), 16) + 4;
    return {
      'the PDF header': 6,
      'a page content stream': sealed.indexOf('stream', sealed.indexOf('/Contents')) + 12,
      'the document information (Title)': sealed.indexOf('/Title') + 12,
      'the original cross-reference table': sealed.indexOf('xref') + 12,
      'the signature dictionary (/Reason)': sealed.lastIndexOf('/Reason') + 10,
      'the ByteRange numbers': sealed.lastIndexOf('/ByteRange [') + 14,
      'the last cross-reference table': sealed.lastIndexOf('\nxref\n') + 12,
      'the last trailer (/Root)': sealed.lastIndexOf('/Root') + 6,
      'the final %%EOF': sealed.lastIndexOf('%%EOF') + 2,
      'the CMS header': start + 2,
      'an embedded certificate': start + 1 + 2 * 120,
      'the signed attributes': start + 1 + 2 * (derLength - 420),
      'the signature value': start + 1 + 2 * (derLength - 20),
      'the zero padding after the CMS': end - 10,
    };
  };

  it('makes verification fail wherever the byte is', async () => {
    const outcomes: Record<string, boolean> = {};
    for (const [where, position] of Object.entries(positions())) {
      const result = await verifyPdfSeal(flipByte(sealed, position), {
        caPem: identity.caPem,
        cacheDir: signingDir,
      });
      outcomes[where] = result.valid && result.trusted;
      if (process.env.SHOW_FLIP_REASONS) console.log(where, position, result.signed, result.reason);
    }
    expect(Object.values(outcomes)).not.toContain(true);
    expect(Object.keys(outcomes)).toHaveLength(14);
  }, 60_000);

  it('inside the signed byte ranges, pdfsig itself reports a digest mismatch', () => {
    for (const position of [
      positions()['a page content stream'],
      positions()['the document information (Title)'],
    ]) {
      const report = pdfsig(write('flipped.pdf', flipByte(sealed, position ?? 0)));
      expect(report).toContain('Digest Mismatch.');
    }
  });

  it('a byte appended after the signature leaves it valid but not covering the whole file', async () => {
    const result = await verifyPdfSeal(Buffer.concat([sealed, Buffer.from('\n% appended\n')]), {
      caPem: identity.caPem,
      cacheDir: signingDir,
    });
    expect(result).toMatchObject({ signed: true, valid: false, digestOk: true, wholeDocumentCovered: false });
  });
});

describe('verifyPdfSeal on files that are not sealed PDFs', () => {
  const verify = (bytes: Buffer) => verifyPdfSeal(bytes, { caPem: identity.caPem, cacheDir: signingDir });

  it('an unsigned PDF is signed:false', async () => {
    const result = await verify(original);
    expect(result).toMatchObject({
      signed: false,
      valid: false,
      trusted: false,
      reason: 'The PDF carries no digital signature.',
    });
  });

  it('garbage, an empty file and a PNG are signed:false with a reason, without throwing', async () => {
    const png = Buffer.from('89504e470d0a1a0a0000000d49484452', 'hex');
    for (const bytes of [Buffer.from('garbage'), Buffer.alloc(0), png, Buffer.alloc(100_000, 0xff)]) {
      const result = await verify(bytes);
      expect(result.signed).toBe(false);
      expect(result.reason.length).toBeGreaterThan(10);
    }
  });

  it('a truncated sealed PDF and a PDF header followed by noise do not crash it', async () => {
    for (const bytes of [
      sealed.subarray(0, Math.floor(sealed.length / 2)),
      Buffer.from('%PDF-1.7\n\u0000\u0001garbage'),
    ]) {
      const result = await verify(bytes);
      expect(result.valid).toBe(false);
      expect(typeof result.reason).toBe('string');
    }
  });
});
