import { randomBytes } from 'node:crypto';
import { closeSync, fsyncSync, openSync, renameSync, rmSync, writeSync } from 'node:fs';

/**
 * Writes a file so that readers see either the old file or the complete new one, never a
 * half-written one: the bytes go to a temporary file in the same directory, are flushed to disk,
 * and the temporary file is renamed over the target (rename(2) is atomic within a file system).
 * `mode` sets the permissions at creation (0600 for secrets), so a secret is never readable by
 * others even for a moment.
 *
 * Reference: rename(2), "If newpath already exists, it will be atomically replaced".
 *
 * Throws the file system's error (the temporary file is removed).
 *
 * Example: writeFileAtomic(path.join(signingDir, 'a.txt'), 'hi', 0o600) leaves that file containing "hi", mode 0600.
 */
export function writeFileAtomic(target: string, data: string | Uint8Array, mode = 0o600): void {
  const temporary = `${target}.tmp-${process.pid}-${randomBytes(6).toString('hex')}`;
  try {
    const descriptor = openSync(temporary, 'wx', mode);
    try {
      writeSync(descriptor, typeof data === 'string' ? Buffer.from(data, 'utf8') : data);
      fsyncSync(descriptor);
    } finally {
      closeSync(descriptor);
    }
    renameSync(temporary, target);
  } catch (error) {
    rmSync(temporary, { force: true });
    throw error;
  }
}
