import { execFileSync } from 'node:child_process';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { PDFDict, PDFDocument, PDFName } from 'pdf-lib';
import { afterAll, describe, expect, it } from 'vitest';
import { appendDocumentInfo } from './pdf-info-update.ts';

/**
 * The incremental information update, read back by two independent PDF readers: poppler's
 * `pdfinfo` (Debian poppler-utils) and pdf-lib's parser. The input is a small PDF written by
 * pdf-lib with a classic cross-reference table — the same shape Chromium writes (the report
 * printed by Chromium is checked the same way in tests/browser/pdf-report.browser.test.ts).
 */

const folder = mkdtempSync(path.join(os.tmpdir(), 'rateledger-info-update-'));
afterAll(() => rmSync(folder, { recursive: true, force: true }));

async function classicPdf(pages: number): Promise<Uint8Array> {
  const document = await PDFDocument.create({ updateMetadata: false });
  for (let index = 0; index < pages; index += 1) document.addPage([200, 200]);
  return document.save({ useObjectStreams: false });
}

function pdfinfo(bytes: Uint8Array): Record<string, string> {
  const file = path.join(folder, `f-${Math.random().toString(36).slice(2)}.pdf`);
  writeFileSync(file, bytes);
  const out = execFileSync('pdfinfo', ['-isodates', file], { encoding: 'utf8' });
  return Object.fromEntries(
    out
      .split('\n')
      .map((line) => /^([^:]+):\s*(.*)$/.exec(line))
      .filter((match) => match !== null)
      .map((match) => [match[1], match[2]]),
  ) as Record<string, string>;
}

describe('appendDocumentInfo', () => {
  const text = {
    Title: 'Stabilité — Ø 40 mg 𝛼 report',
    Author: 'Analyst One',
    Subject: 'Assay at 25 °C',
    Keywords: 'stability kinetics RL-1',
    Creator: 'Rateledger',
    Producer: 'Rateledger test',
  };
  const when = new Date('2026-12-01T14:05:00Z');

  it('keeps the original bytes and appends one update that pdfinfo reads (ISO 32000-1 §7.5.6)', async () => {
    const original = await classicPdf(3);
    const result = appendDocumentInfo(original, text, { CreationDate: when, ModDate: when });
    expect(result).not.toBeNull();
    expect(result!.pageCount).toBe(3);
    expect(Buffer.from(result!.pdf.subarray(0, original.length)).equals(Buffer.from(original))).toBe(true);
    const info = pdfinfo(result!.pdf);
    expect(info.Title).toBe(text.Title); // UTF-16BE with a surrogate pair for 𝛼 (§7.9.2.2)
    expect(info.Author).toBe('Analyst One');
    expect(info.Subject).toBe('Assay at 25 °C');
    expect(info.Keywords).toBe('stability kinetics RL-1');
    expect(info.Creator).toBe('Rateledger');
    expect(info.Producer).toBe('Rateledger test');
    expect(info.CreationDate).toBe('2026-12-01T14:05:00Z');
    expect(info.ModDate).toBe('2026-12-01T14:05:00Z');
    expect(Number(info.Pages)).toBe(3);
    expect(info.Suspects).toBe('no');
  });

  it('is read by pdf-lib too, with the title shown in the window title bar (§12.2)', async () => {
    const result = appendDocumentInfo(await classicPdf(2), text, { CreationDate: when });
    const document = await PDFDocument.load(result!.pdf, { updateMetadata: false });
    expect(document.getTitle()).toBe(text.Title);
    expect(document.getProducer()).toBe('Rateledger test');
    expect(document.getCreationDate()?.toISOString()).toBe('2026-12-01T14:05:00.000Z');
    expect(document.getPageCount()).toBe(2);
    const preferences = document.catalog.lookup(PDFName.of('ViewerPreferences'), PDFDict);
    expect(preferences.get(PDFName.of('DisplayDocTitle'))?.toString()).toBe('true');
  });

  it('declines what it does not read with certainty: cross-reference streams, earlier updates, non-PDF', async () => {
    const document = await PDFDocument.create();
    document.addPage();
    const withStreams = await document.save({ useObjectStreams: true });
    expect(appendDocumentInfo(withStreams, text, {})).toBeNull();
    const once = appendDocumentInfo(await classicPdf(1), text, {});
    expect(appendDocumentInfo(once!.pdf, text, {})).toBeNull(); // has /Prev now
    expect(appendDocumentInfo(new TextEncoder().encode('not a pdf at all'), text, {})).toBeNull();
    const truncated = (await classicPdf(1)).subarray(0, 300);
    expect(appendDocumentInfo(truncated, text, {})).toBeNull();
  });
});
