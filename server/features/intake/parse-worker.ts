/**
 * The parse worker's script (a worker thread of `parse-pool.ts`): reads one uploaded file per
 * message with `readUpload` and answers its sheets (or, for the upload's dry run, only that it
 * can be kept: copying 500,000 cells back costs the main thread 50–150 ms), or the reader's
 * refusal as plain data
 * (structured clone keeps no error classes). Anything else that goes wrong is answered as
 * 'internal', and the server answers a 500 for it as for any other fault.
 */
import { parentPort } from 'node:worker_threads';
import type { ParseOutcome, ParseTask } from './parse-protocol.ts';
import { FileReadError } from './readers/file-read-error.ts';
import { readUpload } from './readers/read-upload.ts';

async function answer(task: ParseTask): Promise<ParseOutcome> {
  try {
    const sheets = await readUpload(task.bytes, task.format, task.fileName);
    return { ok: true, sheets: task.answer === 'sheets' ? sheets : null };
  } catch (error) {
    if (error instanceof FileReadError) return { ok: false, code: error.code, message: error.message };
    return { ok: false, code: 'internal', message: (error as Error).message };
  }
}

parentPort?.on('message', (message: { task: ParseTask }) => {
  void answer(message.task).then((result) => parentPort?.postMessage({ result }));
});
