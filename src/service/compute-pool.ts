/**
 * The server's one pool of compute worker threads (piscina): fits, Kramers-Kronig checks and the heavy
 * stage of uploads run there, never on the event loop, so reads keep being answered while a large
 * table is fitted. The queue is bounded: when every thread is busy and `maxQueue` tasks wait, a new
 * task is refused at once with a BusyError (HTTP 503 + Retry-After) rather than queued without end.
 */
import { availableParallelism } from 'node:os';
import { Piscina } from 'piscina';
import { BusyError, InputError } from '../errors.ts';
import { unwrapOutcome, type ComputeOutcome, type ComputeResult, type ComputeTask } from './compute.ts';

export interface ComputePoolOptions {
  /** Worker threads; default one per spare core (cores − 1), at least one. */
  threads?: number;
  /** Tasks that may wait for a thread; default DEFAULT_COMPUTE_QUEUE. 0: refuse whenever all threads are busy. */
  maxQueue?: number;
}

/** Enough for a burst of uploads from a lab's instruments at once; a small table waits milliseconds. */
export const DEFAULT_COMPUTE_QUEUE = 32;

/** One thread per core the event loop does not need, at least one. */
export function defaultComputeThreads(): number {
  return Math.max(1, availableParallelism() - 1);
}

/**
 * Where the worker's code is: the one place a build has to see. scripts/build.js makes every .ts file
 * named by a URL relative to import.meta.url an entry point of its own and points the URL at its .js
 * output, so in dist/ this is the bundled worker. From the TypeScript sources (tsx, tests) a worker thread does
 * not inherit the tsx loader, so the .mjs bootstrap beside it registers tsx first.
 */
export function computeWorkerEntry(): string {
  const worker = new URL('./compute-worker.ts', import.meta.url).href;
  return worker.endsWith('.ts') ? new URL('./compute-worker-tsx.mjs', import.meta.url).href : worker;
}

/**
 * The task was stopped because whoever asked for it no longer waits (the HTTP client disconnected): a
 * running task's thread is ended, a waiting one leaves the queue. Not a fault; nobody is left to answer.
 */
export class TaskAbandonedError extends InputError {
  constructor() {
    super('request-abandoned', 'the request was cancelled before its fit or check finished (the client went away); its work was stopped');
    this.name = 'TaskAbandonedError';
  }
}

export class ComputePool {
  readonly threads: number;
  readonly maxQueue: number;
  private readonly pool: Piscina;
  private inFlight = 0;
  /** Tasks stopped because their requester went away (see `run`). */
  abandoned = 0;

  constructor(options: ComputePoolOptions = {}) {
    this.threads = options.threads ?? defaultComputeThreads();
    this.maxQueue = options.maxQueue ?? DEFAULT_COMPUTE_QUEUE;
    this.pool = new Piscina({
      filename: computeWorkerEntry(),
      // Threads start on the first task (loading the sources takes a moment) and stay a while.
      minThreads: 0,
      maxThreads: this.threads,
      idleTimeout: 5 * 60_000,
      // Our own bound (inFlight) refuses first; piscina's is the same number, as a backstop.
      maxQueue: this.maxQueue,
      concurrentTasksPerWorker: 1,
      // Compute threads run at a lower scheduling priority (nice +10, via @napi-rs/nice where it installed),
      // so on a machine with few cores the event loop that answers reads wins the CPU over a long fit.
      niceIncrement: 10,
    });
  }

  /** Tasks running or waiting. */
  get pending(): number {
    return this.inFlight;
  }

  /**
   * Run a task on a worker thread; BusyError when all threads are busy and the queue is full. When `signal`
   * aborts (the client disconnected), the task leaves the queue or its thread is ended (piscina replaces it),
   * and the call rejects with TaskAbandonedError: a fit nobody waits for must not hold a thread for minutes.
   */
  async run<T extends ComputeTask>(task: T, signal?: AbortSignal): Promise<ComputeResult<T>> {
    if (this.inFlight >= this.threads + this.maxQueue) {
      throw new BusyError(
        `the server is busy with ${this.inFlight} fits and checks (${this.threads} compute threads, ${this.maxQueue} waiting at most); try again shortly`,
        1,
      );
    }
    this.inFlight++;
    try {
      return unwrapOutcome<ComputeResult<T>>((await this.pool.run(task, { signal })) as ComputeOutcome);
    } catch (err) {
      if (signal?.aborted && (err as Error).name === 'AbortError') {
        this.abandoned++;
        throw new TaskAbandonedError();
      }
      throw err;
    } finally {
      this.inFlight--;
    }
  }

  /** Stop the threads (running tasks are abandoned). */
  close(): Promise<void> {
    return this.pool.destroy();
  }
}
