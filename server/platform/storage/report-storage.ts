import { createHash } from 'node:crypto';
import { constants } from 'node:fs';
import { mkdir, open, readdir, readFile, rename, stat, unlink } from 'node:fs/promises';
import path from 'node:path';
import { PROJECT_ROOT } from '../config/project-root.ts';

/**
 * Where rendered PDFs live: a content-addressed store, `<dir>/<sha256[0..2]>/<sha256>.pdf`, so a
 * file's name is its fingerprint and a stored PDF can be checked against its report version's
 * `pdf_sha256` at any time. The directory is `REPORTS_DIR` (default `reports/` at the repo root).
 *
 * Writing is three steps so that a process killed at any moment leaves either nothing or exactly
 * one complete file per version:
 * 1. `writeIncoming(versionId, bytes)` writes `<dir>/.incoming/version-<id>.pdf` and fsyncs it;
 * 2. the caller commits the version as `ready` with the hash (one transaction);
 * 3. `promote(versionId, sha256)` renames the incoming file into place and fsyncs the directory.
 * A retried job that finds the version `ready` calls `promote` again, which finishes step 3 or
 * notices it was already done. A rename within one file system is atomic (POSIX rename(2)), so a
 * reader never sees half a PDF under its final name.
 */

export const REPO_ROOT = PROJECT_ROOT;
export const DEFAULT_REPORTS_DIR = path.join(REPO_ROOT, 'reports');
const INCOMING = '.incoming';
const SHA256_HEX = /^[0-9a-f]{64}$/;
const INCOMING_NAME = /^version-(\d+)\.pdf$/;

export type PromoteOutcome = 'moved' | 'already-stored';

export class StoredPdfMissingError extends Error {
  constructor(
    readonly versionId: number,
    readonly sha256: string,
  ) {
    super(`The PDF of report version ${versionId} (SHA-256 ${sha256}) is not in the report store.`);
    this.name = 'StoredPdfMissingError';
  }
}

export function sha256Hex(bytes: Uint8Array): string {
  return createHash('sha256').update(bytes).digest('hex');
}

export interface ReportStorage {
  readonly dir: string;
  pdfPath(sha256: string): string;
  incomingPath(versionId: number): string;
  writeIncoming(versionId: number, bytes: Uint8Array): Promise<string>;
  promote(versionId: number, sha256: string): Promise<PromoteOutcome>;
  discardIncoming(versionId: number): Promise<boolean>;
  /** Version ids that have an incoming file (for the stale-file sweep). */
  listIncoming(): Promise<number[]>;
  hasPdf(sha256: string): Promise<boolean>;
  readPdf(sha256: string): Promise<Buffer>;
  /**
   * The PDF of a ready version: from its final place, or — in the moment between the commit and
   * the rename — from `.incoming/` when the bytes there have the recorded hash. Null when neither.
   */
  readVersionPdf(versionId: number, sha256: string): Promise<Buffer | null>;
}

/** The store rooted at `dir` (default: REPORTS_DIR from the environment, else `reports/`). */
export function reportStorage(dir = process.env.REPORTS_DIR || DEFAULT_REPORTS_DIR): ReportStorage {
  const root = path.resolve(dir);
  const incomingDir = path.join(root, INCOMING);

  const pdfPath = (sha256: string) => {
    if (!SHA256_HEX.test(sha256)) throw new Error(`not a SHA-256 hex digest: ${sha256}`);
    return path.join(root, sha256.slice(0, 2), `${sha256}.pdf`);
  };
  const incomingPath = (versionId: number) => path.join(incomingDir, `version-${versionId}.pdf`);

  async function exists(file: string) {
    try {
      await stat(file);
      return true;
    } catch {
      return false;
    }
  }

  return {
    dir: root,
    pdfPath,
    incomingPath,

    async writeIncoming(versionId, bytes) {
      await mkdir(incomingDir, { recursive: true });
      const file = incomingPath(versionId);
      // Truncate: a render retried after a crash overwrites what the dead attempt left.
      const handle = await open(file, constants.O_WRONLY | constants.O_CREAT | constants.O_TRUNC, 0o644);
      try {
        await handle.writeFile(bytes);
        await handle.sync();
      } finally {
        await handle.close();
      }
      return file;
    },

    async promote(versionId, sha256) {
      const target = pdfPath(sha256);
      const incoming = incomingPath(versionId);
      const incomingExists = await exists(incoming);
      if (!incomingExists) {
        if (await exists(target)) return 'already-stored';
        throw new StoredPdfMissingError(versionId, sha256);
      }
      const actual = sha256Hex(await readFile(incoming));
      if (actual !== sha256) {
        // Not the bytes the record names (left by an attempt that never committed): useless.
        await unlink(incoming);
        if (await exists(target)) return 'already-stored';
        throw new StoredPdfMissingError(versionId, sha256);
      }
      if (await exists(target)) {
        await unlink(incoming);
        return 'already-stored';
      }
      await mkdir(path.dirname(target), { recursive: true });
      await rename(incoming, target);
      await syncDirectory(path.dirname(target));
      return 'moved';
    },

    async discardIncoming(versionId) {
      try {
        await unlink(incomingPath(versionId));
        return true;
      } catch {
        return false;
      }
    },

    async listIncoming() {
      let names: string[];
      try {
        names = await readdir(incomingDir);
      } catch {
        return [];
      }
      return names.flatMap((name) => {
        const match = INCOMING_NAME.exec(name);
        return match ? [Number(match[1])] : [];
      });
    },

    hasPdf: (sha256) => exists(pdfPath(sha256)),
    readPdf: (sha256) => readFile(pdfPath(sha256)),

    async readVersionPdf(versionId, sha256) {
      for (const file of [pdfPath(sha256), incomingPath(versionId)]) {
        const bytes = await readFile(file).catch(() => null);
        if (bytes && sha256Hex(bytes) === sha256) return bytes;
      }
      return null;
    },
  };
}

/** Makes a rename durable: fsync the directory that holds the new name. */
async function syncDirectory(dir: string) {
  const handle = await open(dir, constants.O_RDONLY);
  try {
    await handle.sync();
  } finally {
    await handle.close();
  }
}
