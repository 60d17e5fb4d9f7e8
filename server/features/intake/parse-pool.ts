/**
 * Reading uploaded files off the event loop: every upload, preview and import reads its file in
 * one of a few worker threads (`parse-worker.ts`), so a 10 MB file costs the server's main
 * thread only the copy of its bytes out and of its cells back, never the parsing.
 *
 * The pool has one worker per core but one, at least one and at most four
 * (`os.availableParallelism()`), so the main thread keeps a core for answering requests. Each
 * worker may use at most `PARSE_WORKER_HEAP_MB` of heap and `PARSE_TIMEOUT_MS` per file; a file
 * past either is refused with a 422 that says so, and the worker is replaced.
 *
 * Throws `HttpError(422)` with the reader's message and `{ code }` for a file that cannot be
 * kept or read, and rethrows anything unexpected (a 500).
 *
 * Example: `await readSheetsInWorker(bytes, 'csv', 'results.csv')` gives the file's grids;
 * `await checkFileInWorker(bytes, 'csv', 'results.csv')` only refuses or returns.
 */
import { availableParallelism } from 'node:os';
import type { SheetGrid } from '../../../shared/intake/sheet-grid.ts';
import { HttpError } from '../../platform/http/http-error.ts';
import { createWorkerPool, WorkerFailure, type WorkerPool } from '../../platform/parsing/worker-pool.ts';
import { workerScript } from '../../platform/parsing/worker-script.ts';
import type { ParseOutcome, ParseTask } from './parse-protocol.ts';
import type { UploadFormat } from './readers/read-upload.ts';

/**
 * Heap of one worker, in MB. The largest honest file, a 100,000-row workbook, reads in about
 * 60 MB on the fast reader and some 300 MB on the general one (measured; see DEVELOPERS.md).
 */
export const PARSE_WORKER_HEAP_MB = 512;
export const PARSE_TIMEOUT_MS = 60_000;

const MAX_WORKERS = 4;

let pool: WorkerPool<ParseTask, ParseOutcome> | undefined;

function parsePool(): WorkerPool<ParseTask, ParseOutcome> {
  pool ??= createWorkerPool<ParseTask, ParseOutcome>({
    script: workerScript(import.meta.url, './parse-worker'),
    size: Math.min(MAX_WORKERS, Math.max(1, availableParallelism() - 1)),
    resourceLimits: { maxOldGenerationSizeMb: PARSE_WORKER_HEAP_MB, maxYoungGenerationSizeMb: 32 },
    timeoutMs: PARSE_TIMEOUT_MS,
  });
  return pool;
}

/** How many files the parse workers have read since start (tests check the worker path is taken). */
export function parseWorkerReads(): number {
  return pool?.completed ?? 0;
}

function failureError(error: WorkerFailure): HttpError {
  if (error.reason === 'out-of-memory')
    return new HttpError(
      422,
      `The file needs more than ${PARSE_WORKER_HEAP_MB} MB of memory to read, more than Rateledger allows for one file. Delete the sheets, rows or columns that are not stability results, or upload the data as CSV.`,
      { code: 'too-large-to-read' },
    );
  if (error.reason === 'timeout')
    return new HttpError(
      422,
      `Reading the file took longer than ${PARSE_TIMEOUT_MS / 1000} s, more than Rateledger allows for one file. Delete the sheets, rows or columns that are not stability results, or upload the data as CSV.`,
      { code: 'too-large-to-read' },
    );
  return new HttpError(500, 'The file could not be read because of an unexpected error. Try again.');
}

async function runInWorker(task: ParseTask): Promise<SheetGrid[] | null> {
  let outcome: ParseOutcome;
  try {
    outcome = await parsePool().run(task);
  } catch (error) {
    if (error instanceof WorkerFailure) throw failureError(error);
    throw error;
  }
  if (outcome.ok) return outcome.sheets;
  if (outcome.code === 'internal') throw new Error(`parse worker: ${outcome.message}`);
  throw new HttpError(422, outcome.message, { code: outcome.code });
}

/** The file's sheets, read and checked in a worker. */
export async function readSheetsInWorker(
  bytes: Uint8Array,
  format: UploadFormat,
  fileName: string,
): Promise<SheetGrid[]> {
  return (await runInWorker({ bytes, format, fileName, answer: 'sheets' }))!;
}

/** The upload's dry run: reads and checks the whole file in a worker; only a refusal comes back. */
export async function checkFileInWorker(
  bytes: Uint8Array,
  format: UploadFormat,
  fileName: string,
): Promise<void> {
  await runInWorker({ bytes, format, fileName, answer: 'verdict' });
}
