import { execFileSync } from 'node:child_process';
import { mkdtempSync } from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { PDFDocument, StandardFonts } from 'pdf-lib';

/**
 * Helpers shared by the signing tests (not used by the application): a scratch signing folder,
 * a small PDF made with pdf-lib, pdfsig/openssl runners and a one-byte change.
 */

export const scratchDir = (label: string) => mkdtempSync(path.join(os.tmpdir(), `rateledger-${label}-`));

/** A two-page PDF with text and metadata, written with or without object streams. */
export async function samplePdf(options: { objectStreams?: boolean } = {}): Promise<Buffer> {
  const document = await PDFDocument.create({ updateMetadata: false });
  document.setTitle('Stability report VTZ-0042 (invented)');
  document.setAuthor('Rateledger test');
  document.setProducer('pdf-lib');
  const font = await document.embedFont(StandardFonts.Helvetica);
  for (const text of ['Assay of Veltrazine 10 mg tablets, batch B-101', 'Signatures']) {
    document.addPage([595, 842]).drawText(text, { x: 56, y: 780, size: 14, font });
  }
  return Buffer.from(await document.save({ useObjectStreams: options.objectStreams ?? false }));
}

/** Runs a Debian tool and returns stdout+stderr whatever its exit status. */
export function tool(command: string, args: string[], env: NodeJS.ProcessEnv = {}): string {
  try {
    return execFileSync(command, args, {
      encoding: 'utf8',
      stdio: ['ignore', 'pipe', 'pipe'],
      env: { ...process.env, ...env },
    });
  } catch (error) {
    const failed = error as { stdout?: string; stderr?: string };
    return `${failed.stdout ?? ''}${failed.stderr ?? ''}`;
  }
}

/** A copy of `bytes` with the byte at `position` changed (to a different, printable value). */
export function flipByte(bytes: Buffer, position: number): Buffer {
  const copy = Buffer.from(bytes);
  const old = copy[position] ?? 0;
  copy[position] = old === 0x31 ? 0x32 : 0x31; // '1', or '2' when it already was '1'
  return copy;
}

/** Byte offsets of the last signature's /Contents hex string: [position of '<', position of '>']. */
export function lastContents(pdf: Buffer): [number, number] {
  const start = pdf.lastIndexOf('/Contents <') + '/Contents '.length;
  return [start, pdf.indexOf('>', start)];
}
