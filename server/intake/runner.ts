import type { Worker } from 'node:worker_threads';
import type { Knex } from 'knex';
import { clearBatchRows, type CheckOptions, type CheckProgress } from './check.js';
import type { ToRunner, ToWorker } from './check-worker.js';
import { startWorker } from '../lib/workers.js';

/** Attempts of one batch's check before it is marked failed (a worker that dies twice on it). */
const MAX_ATTEMPTS = 3;
/** An idle worker thread is ended after this long (it starts again on the next batch). */
const IDLE_MS = 15_000;

interface Job {
  batchId: number;
  done: () => void;
}

/**
 * The request thread's side of intake checks: a queue of batches handed one at a time to a
 * worker thread (check-worker.ts) with its own SQLite connection. Progress arrives as messages.
 * A worker that dies (crash, out of memory) never takes the server with it: the batch is checked
 * again from the first line (its note says so), or marked failed after MAX_ATTEMPTS.
 */
export class CheckRunner {
  private worker: Worker | null = null;
  private queue: Job[] = [];
  private current: Job | null = null;
  private idleTimer: NodeJS.Timeout | null = null;
  private waiters: (() => void)[] = [];
  readonly live = new Map<number, CheckProgress>();

  constructor(
    private readonly db: Knex,
    private readonly dbFile: string,
    private readonly opts: CheckOptions,
    private readonly onFinished: (batchId: number) => Promise<void>,
  ) {}

  /** Queue a batch (state `checking`); resolves when its check has ended, however it ended. */
  enqueue(batchId: number): Promise<void> {
    return new Promise<void>((done) => {
      this.queue.push({ batchId, done });
      this.pump();
    });
  }

  isQueued(batchId: number): boolean {
    return this.current?.batchId === batchId || this.queue.some((j) => j.batchId === batchId);
  }

  /** A check is queued or running. */
  busy(): boolean {
    return this.current !== null || this.queue.length > 0;
  }

  /** Resolves when nothing is queued or running. */
  idle(): Promise<void> {
    if (!this.current && !this.queue.length) return Promise.resolve();
    return new Promise((r) => this.waiters.push(r));
  }

  async close(): Promise<void> {
    const w = this.worker;
    this.worker = null;
    if (w) {
      w.removeAllListeners();
      await w.terminate();
    }
  }

  private pump(): void {
    if (this.current) return;
    const job = this.queue.shift();
    if (!job) {
      for (const w of this.waiters.splice(0)) w();
      if (this.worker && !this.idleTimer) {
        this.worker.unref();
        this.idleTimer = setTimeout(() => void this.close(), IDLE_MS);
        this.idleTimer.unref();
      }
      return;
    }
    if (this.idleTimer) {
      clearTimeout(this.idleTimer);
      this.idleTimer = null;
    }
    this.current = job;
    try {
      const w = this.worker ?? this.spawn();
      w.ref();
      w.postMessage({ kind: 'check', batchId: job.batchId } satisfies ToWorker);
    } catch (e) {
      console.error('intake: could not start the check worker', e);
      void this.crashed(job, e);
    }
  }

  private spawn(): Worker {
    // the check's memory is bounded by its chunk; a cap keeps V8 from growing its heap lazily
    // on a million-row batch (a worker over it ends and the batch is checked again, then failed)
    const w = startWorker(new URL('./check-worker.ts', import.meta.url), { dbFile: this.dbFile, opts: this.opts }, { resourceLimits: { maxOldGenerationSizeMb: 384 } });
    this.worker = w;
    w.on('message', (m: ToRunner) => {
      if (m.kind === 'progress') this.live.set(m.batchId, m);
      else if (m.kind === 'done') {
        if (m.error) console.error(`intake: the check of batch ${m.batchId} could not record its end: ${m.error}`);
        this.finish(m.batchId);
      }
    });
    const lost = (why: unknown) => {
      if (this.worker !== w) return;
      this.worker = null;
      w.removeAllListeners();
      w.on('error', () => {});
      console.error('intake: the check worker stopped', why);
      const job = this.current;
      if (job) void this.crashed(job, why);
    };
    w.on('error', lost);
    w.on('exit', (code) => lost(new Error(`exit code ${code}`)));
    return w;
  }

  private finish(batchId: number): void {
    const job = this.current;
    if (!job || job.batchId !== batchId) return;
    this.live.delete(batchId);
    void this.onFinished(batchId)
      .catch((e) => console.error('intake: after a check', e))
      .finally(() => {
        this.current = null;
        job.done();
        this.pump();
      });
  }

  /** The worker died during a job: check the batch again from the start, or give up after MAX_ATTEMPTS. */
  private async crashed(job: Job, why: unknown): Promise<void> {
    const p = this.live.get(job.batchId);
    this.live.delete(job.batchId);
    this.current = null;
    try {
      const b = await this.db('batches').where({ id: job.batchId }).first('state', 'check_attempts', 'rows_done', 'rows_total');
      if (b?.state === 'checking') {
        const attempts = Number(b.check_attempts) + 1;
        const at = `row ${(p?.rowsDone ?? b.rows_done ?? 0).toLocaleString('en')}${b.rows_total ? ` of ${Number(b.rows_total).toLocaleString('en')}` : ''}`;
        if (attempts < MAX_ATTEMPTS) {
          await this.db('batches').where({ id: job.batchId }).update({
            check_attempts: attempts, updated_at: new Date().toISOString(),
            check_note: `The check stopped unexpectedly at ${at}; what it had written was discarded and the batch is checked again from the first line (attempt ${attempts + 1}).`,
          });
          this.queue.unshift(job);
          this.pump();
          return;
        }
        const failure = `The check stopped unexpectedly ${attempts} times (last at ${at}); nothing of the batch was kept and the problem has been logged for the administrators. Uploading the same file again retries it.`;
        await this.db('batches').where({ id: job.batchId }).update({ state: 'failed', failure, check_attempts: attempts, updated_at: new Date().toISOString() });
        await clearBatchRows(this.db, job.batchId);
      }
    } catch (e) {
      console.error(`intake: could not record the end of batch ${job.batchId} after`, why, e);
    }
    job.done();
    this.pump();
  }
}
