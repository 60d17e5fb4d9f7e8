import { closeSync, openSync, readFileSync, renameSync, statSync, unlinkSync, writeSync } from 'node:fs';
import { setTimeout as sleep } from 'node:timers/promises';

/**
 * Runs `work` while holding an exclusive lock file, so that two processes starting at the same
 * time (the web server and the render worker, or two test files) do not both create a
 * certificate authority. The lock is a file created with O_CREAT|O_EXCL (`'wx'`), which the
 * kernel grants to exactly one caller; it holds the owner's process id and is removed afterwards.
 *
 * A lock whose owner process no longer exists on this host, or that is older than `staleMs`
 * (a crashed owner on another host sharing the directory), is taken over. Waiters poll every
 * 20–50 ms.
 *
 * Reference: open(2), O_EXCL ("if pathname already exists, then open() fails with EEXIST").
 *
 * Throws when the lock cannot be had within `timeoutMs`, and whatever `work` throws (the lock is
 * released either way).
 *
 * Example: await withFileLock(path.join(signingDir, 'ca.lock'), async () => 42) resolves to 42.
 */

export interface FileLockOptions {
  timeoutMs?: number;
  staleMs?: number;
}

function ownerIsGone(lockPath: string, staleMs: number): boolean {
  try {
    const ageMs = Date.now() - statSync(lockPath).mtimeMs;
    if (ageMs > staleMs) return true;
    const pid = Number.parseInt(readFileSync(lockPath, 'utf8'), 10);
    if (!Number.isInteger(pid) || pid <= 0) return ageMs > 1_000; // being written right now
    process.kill(pid, 0);
    return false;
  } catch (error) {
    return (error as NodeJS.ErrnoException).code === 'ESRCH';
  }
}

export async function withFileLock<T>(
  lockPath: string,
  work: () => Promise<T>,
  { timeoutMs = 30_000, staleMs = 10 * 60_000 }: FileLockOptions = {},
): Promise<T> {
  const started = Date.now();
  for (;;) {
    try {
      const descriptor = openSync(lockPath, 'wx', 0o600);
      writeSync(descriptor, String(process.pid));
      closeSync(descriptor);
      break;
    } catch (error) {
      if ((error as NodeJS.ErrnoException).code !== 'EEXIST') throw error;
      if (ownerIsGone(lockPath, staleMs)) {
        // Move it aside first: only one waiter's rename of the stale file can succeed.
        const aside = `${lockPath}.stale-${process.pid}-${Date.now()}`;
        try {
          renameSync(lockPath, aside);
          unlinkSync(aside);
        } catch {
          // Someone else took it over first; try again.
        }
        continue;
      }
      if (Date.now() - started > timeoutMs) {
        throw new Error(`Timed out after ${timeoutMs} ms waiting for the lock ${lockPath}.`);
      }
      await sleep(20 + Math.floor(Math.random() * 30));
    }
  }
  try {
    return await work();
  } finally {
    try {
      unlinkSync(lockPath);
    } catch {
      // Already gone (taken over as stale); nothing to release.
    }
  }
}
