import { Readable } from 'node:stream';
import type { Request } from 'express';
import { describe, expect, it } from 'vitest';
import { type HashedFile, hashingMemoryStorage } from './hashing-memory-storage.ts';

/** Runs the engine over a stream of `chunks`, as multer would for one file part. */
function receive(chunks: Buffer[]): Promise<Partial<HashedFile>> {
  const storage = hashingMemoryStorage();
  const file = { fieldname: 'file', originalname: 'x.csv', stream: Readable.from(chunks) } as never;
  return new Promise((resolve, reject) =>
    storage._handleFile({} as Request, file, (error, info) =>
      error ? reject(error) : resolve(info as Partial<HashedFile>),
    ),
  );
}

/** Splits `bytes` into chunks of the given sizes, cycling through them. */
function chunked(bytes: Buffer, sizes: number[]): Buffer[] {
  const chunks: Buffer[] = [];
  for (let at = 0, index = 0; at < bytes.length; index += 1) {
    const size = sizes[index % sizes.length]!;
    chunks.push(bytes.subarray(at, at + size));
    at += size;
  }
  return chunks;
}

describe('hashingMemoryStorage', () => {
  // SHA-256 test vectors: FIPS 180-2, Appendix B.1 ("abc") and B.3 (one million "a").
  it('hashes a one-chunk file as FIPS 180-2 B.1 gives it', async () => {
    const info = await receive([Buffer.from('abc')]);
    expect(info.sha256).toBe('ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad');
    expect(info.size).toBe(3);
    expect(info.buffer?.toString()).toBe('abc');
  });

  it('keeps every byte and hashes across uneven chunks and buffer growth (FIPS 180-2 B.3)', async () => {
    const million = Buffer.alloc(1_000_000, 'a');
    const info = await receive(chunked(million, [1, 65_536, 7, 300_000, 12_345]));
    expect(info.sha256).toBe('cdc76e5c9914fb9281a1c7e284d73e67f1809a48a497200e046d39ccc7112cd0');
    expect(info.size).toBe(1_000_000);
    expect(info.buffer?.equals(million)).toBe(true);
  });

  it('keeps arbitrary bytes exactly as received', async () => {
    const bytes = Buffer.from(Array.from({ length: 200_003 }, (_, index) => (index * 7919) % 256));
    const info = await receive(chunked(bytes, [65_536, 3, 100_000]));
    expect(info.buffer?.equals(bytes)).toBe(true);
    expect(info.buffer?.length).toBe(200_003);
  });

  it('passes a stream error on instead of a file', async () => {
    const storage = hashingMemoryStorage();
    const stream = new Readable({
      read() {
        this.destroy(new Error('connection reset'));
      },
    });
    const outcome = await new Promise<Error | null>((resolve) =>
      storage._handleFile({} as Request, { stream } as never, (error) => resolve(error)),
    );
    expect(outcome?.message).toBe('connection reset');
  });
});

describe('hashingMemoryStorage memory', () => {
  it('keeps the file in shared memory, so a parse worker reads it without a copy', async () => {
    const info = await receive([Buffer.from('Month,Assay\n0,100.1\n')]);
    expect(info.buffer?.buffer).toBeInstanceOf(SharedArrayBuffer);
    expect(Buffer.isBuffer(info.buffer)).toBe(true);
  });
});
