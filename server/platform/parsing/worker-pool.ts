/**
 * A small pool of worker threads (node:worker_threads) for CPU-heavy work that must not hold up
 * the server's event loop: reading an uploaded workbook or CSV costs up to a second or two of
 * CPU and a few hundred MB, and on the main thread every other request would wait that long.
 *
 * Each worker runs one task at a time; tasks queue in arrival order. A worker is started when a
 * task needs one (at most `size`), kept for the next task, and does not keep the process alive
 * while idle. Each runs under `resourceLimits` (V8 heap sizes), so a file that needs more memory
 * ends its worker ("out-of-memory"), never the server; a task past `timeoutMs` ends its worker
 * too ("timeout"). Either way the task is rejected with a `WorkerFailure` and the next task gets a
 * fresh worker.
 *
 * The worker script answers each message `{ task }` with one message `{ result }`; an error the
 * task expects is part of its result (structured clone does not keep error classes).
 *
 * Example: `createWorkerPool<Job, Answer>({ script, size: 2, ... }).run(job)` is the worker's
 * answer to `job`.
 */
import { type ResourceLimits, Worker } from 'node:worker_threads';

export type WorkerFailureReason = 'out-of-memory' | 'timeout' | 'crashed';

export class WorkerFailure extends Error {
  readonly reason: WorkerFailureReason;
  constructor(reason: WorkerFailureReason, message: string) {
    super(message);
    this.name = 'WorkerFailure';
    this.reason = reason;
  }
}

export interface WorkerScript {
  url: URL;
  /** Node options for the worker (a TypeScript loader when the script is a .ts source). */
  execArgv: string[];
}

export interface WorkerPoolOptions {
  script: WorkerScript;
  /** Most workers at once. */
  size: number;
  resourceLimits: ResourceLimits;
  /** Longest a task may take before its worker is ended. */
  timeoutMs: number;
}

export interface WorkerPool<Task, Result> {
  run(task: Task): Promise<Result>;
  /** Tasks answered by a worker since the pool was made (for tests and diagnostics). */
  readonly completed: number;
  close(): Promise<void>;
}

interface Pending<Task, Result> {
  task: Task;
  resolve: (result: Result) => void;
  reject: (error: Error) => void;
}

interface Slot {
  worker: Worker;
  busy: boolean;
}

export function createWorkerPool<Task, Result>(options: WorkerPoolOptions): WorkerPool<Task, Result> {
  const slots = new Set<Slot>();
  const queue: Pending<Task, Result>[] = [];
  let completed = 0;

  const start = (): Slot => {
    const worker = new Worker(options.script.url, {
      execArgv: options.script.execArgv,
      resourceLimits: options.resourceLimits,
    });
    worker.unref();
    const slot: Slot = { worker, busy: false };
    slots.add(slot);
    worker.on('exit', () => slots.delete(slot));
    return slot;
  };

  const assign = (slot: Slot, pending: Pending<Task, Result>) => {
    slot.busy = true;
    slot.worker.ref();
    let settled = false;
    const finish = (outcome: () => void, keep: boolean) => {
      if (settled) return;
      settled = true;
      clearTimeout(timer);
      slot.worker.off('message', onMessage);
      slot.worker.off('error', onError);
      slot.worker.off('exit', onExit);
      if (keep) {
        slot.busy = false;
        slot.worker.unref();
      } else {
        slots.delete(slot);
        void slot.worker.terminate();
      }
      outcome();
      dispatch();
    };
    const onMessage = (message: { result: Result }) =>
      finish(() => {
        completed += 1;
        pending.resolve(message.result);
      }, true);
    const onError = (error: Error & { code?: string }) =>
      finish(
        () =>
          pending.reject(
            error.code === 'ERR_WORKER_OUT_OF_MEMORY'
              ? new WorkerFailure('out-of-memory', 'the task needed more memory than its worker may use')
              : new WorkerFailure('crashed', `the worker failed: ${error.message}`),
          ),
        false,
      );
    const onExit = (code: number) =>
      finish(
        () => pending.reject(new WorkerFailure('crashed', `the worker exited with code ${code}`)),
        false,
      );
    const timer = setTimeout(
      () =>
        finish(
          () =>
            pending.reject(new WorkerFailure('timeout', `the task took longer than ${options.timeoutMs} ms`)),
          false,
        ),
      options.timeoutMs,
    );
    slot.worker.on('message', onMessage);
    slot.worker.on('error', onError);
    slot.worker.on('exit', onExit);
    slot.worker.postMessage({ task: pending.task });
  };

  const dispatch = () => {
    while (queue.length > 0) {
      let slot = [...slots].find((candidate) => !candidate.busy);
      if (!slot && slots.size < options.size) slot = start();
      if (!slot) return;
      assign(slot, queue.shift()!);
    }
  };

  return {
    run: (task) =>
      new Promise<Result>((resolve, reject) => {
        queue.push({ task, resolve, reject });
        dispatch();
      }),
    get completed() {
      return completed;
    },
    close: async () => {
      const workers = [...slots].map((slot) => slot.worker);
      slots.clear();
      await Promise.all(workers.map((worker) => worker.terminate()));
    },
  };
}
