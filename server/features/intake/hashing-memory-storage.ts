/**
 * A multer storage engine that keeps the uploaded file in memory, like `multer.memoryStorage()`,
 * and computes its SHA-256 as the bytes arrive.
 *
 * Why not the stock engine: it gathers the chunks and joins them with one `Buffer.concat` when
 * the file ends, and the upload then hashed the whole buffer in one `createHash().update()`.
 * For eight 10 MB uploads arriving together both run back to back on the server's main thread
 * (about 10 ms to copy and 20 ms to hash each on the development machine), long enough to hold
 * every other request past 200 ms (issue 14 §3, `tests/bench/upload-event-loop.ts`). Here each
 * chunk (busboy hands over some 64 kB at a time) is copied into a buffer that doubles when full
 * and fed to the hash in its own I/O callback, so the work is spread across the file's arrival
 * and other requests run between chunks. The bytes kept are exactly the bytes received.
 *
 * The buffer lives in a `SharedArrayBuffer`, so handing the file to a parse worker
 * (`parse-pool.ts`) shares the memory instead of cloning 10 MB on the main thread for each
 * upload; nothing writes to it after the file ends.
 *
 * The file object gets `buffer` and `size` as with the stock engine, plus `sha256` (lower-case
 * hex). multer's own limits (`fileSize`) still apply: busboy stops the stream and multer calls
 * `_removeFile`, which drops the buffer.
 */
import { createHash } from 'node:crypto';
import type { Request } from 'express';
import type { StorageEngine } from 'multer';

const FIRST_CAPACITY = 64 * 1024;

/** A Buffer over fresh shared memory (zero-filled by the engine). */
const sharedBuffer = (capacity: number) => Buffer.from(new SharedArrayBuffer(capacity));

/** The file as this engine leaves it on `req.file`. */
export type HashedFile = Express.Multer.File & { sha256: string };

/** Whether multer's file came through this engine (it carries its hash). */
export function isHashedFile(file: Express.Multer.File): file is HashedFile {
  return typeof (file as Partial<HashedFile>).sha256 === 'string';
}

export function hashingMemoryStorage(): StorageEngine {
  return {
    _handleFile(_req: Request, file, callback) {
      const hash = createHash('sha256');
      let buffer = sharedBuffer(FIRST_CAPACITY);
      let size = 0;
      let finished = false;
      const finish = (error: Error | null, info?: Partial<HashedFile>) => {
        if (finished) return;
        finished = true;
        callback(error, info);
      };
      file.stream.on('data', (chunk: Buffer) => {
        if (size + chunk.length > buffer.length) {
          let capacity = buffer.length * 2;
          while (capacity < size + chunk.length) capacity *= 2;
          const grown = sharedBuffer(capacity);
          buffer.copy(grown, 0, 0, size);
          buffer = grown;
        }
        chunk.copy(buffer, size);
        size += chunk.length;
        hash.update(chunk);
      });
      file.stream.on('error', (error: Error) => finish(error));
      file.stream.on('end', () => {
        // A view of exactly the bytes received (no copy: the buffer only doubles, so the spare
        // capacity it keeps alive is less than the file itself).
        finish(null, { buffer: buffer.subarray(0, size), size, sha256: hash.digest('hex') });
      });
    },
    _removeFile(_req: Request, file, callback) {
      delete (file as Partial<Express.Multer.File>).buffer;
      callback(null);
    },
  };
}
