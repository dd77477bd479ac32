/**
 * Runs sweep analyses off the backend's event loop, in one worker thread (./sweep-worker.ts),
 * one job at a time in the order asked. Where the worker file is missing or the worker dies,
 * the analysis runs here instead (slower for the loop, same report).
 */
import { existsSync } from 'node:fs';
import { join } from 'node:path';
import { Worker } from 'node:worker_threads';
import type { SweepReport } from '@shared/engine/sweep';
import { runSweepJob, type SweepJob } from './sweep-job';

interface Pending {
  resolve(report: SweepReport): void;
  reject(err: Error): void;
  job: SweepJob;
}

/**
 * The worker's entry: the bundle beside dist/cli.cjs, or the source file under tsx (tests),
 * in `dir` (default: this module's folder).
 */
export function sweepWorkerEntry(dir: string = __dirname): { path: string; execArgv?: string[] } | null {
  const bundled = join(dir, 'sweep-worker.cjs');
  if (existsSync(bundled)) return { path: bundled };
  const source = join(dir, 'sweep-worker.ts');
  if (existsSync(source)) return { path: source, execArgv: ['--require', 'tsx/cjs'] };
  return null;
}

export class SweepAnalyst {
  private worker: Worker | null = null;
  /** The worker could not start or died: analyse in this thread from now on. */
  private inProcess = false;
  private nextId = 1;
  private readonly pending = new Map<number, Pending>();
  private closed = false;

  constructor(private readonly entry = sweepWorkerEntry()) {}

  /** Whether analyses run in a worker thread (false after a failure, or before the first). */
  get threaded(): boolean {
    return this.worker !== null;
  }

  analyse(job: SweepJob): Promise<SweepReport> {
    if (this.closed) return Promise.reject(new Error('the sweep analysis was closed'));
    const worker = this.inProcess ? null : this.startWorker();
    if (!worker) return Promise.resolve().then(() => runSweepJob(job));
    const id = this.nextId++;
    return new Promise<SweepReport>((resolve, reject) => {
      this.pending.set(id, { resolve, reject, job });
      worker.postMessage({ id, job });
    });
  }

  close(): void {
    this.closed = true;
    const worker = this.worker;
    this.worker = null;
    for (const p of this.pending.values()) p.reject(new Error('the sweep analysis was closed'));
    this.pending.clear();
    void worker?.terminate();
  }

  private startWorker(): Worker | null {
    if (this.worker) return this.worker;
    const entry = this.entry;
    if (!entry) {
      this.inProcess = true;
      return null;
    }
    try {
      const worker = new Worker(entry.path, entry.execArgv ? { execArgv: entry.execArgv } : {});
      // An idle analyst never keeps the process alive.
      worker.unref();
      worker.on('message', (m: { id: number; report?: SweepReport; error?: string }) => {
        const p = this.pending.get(m.id);
        if (!p) return;
        this.pending.delete(m.id);
        if (m.report) p.resolve(m.report);
        else p.reject(new Error(m.error ?? 'the sweep analysis failed'));
      });
      worker.on('error', () => this.fallBack(worker));
      worker.on('exit', () => this.fallBack(worker));
      this.worker = worker;
      return worker;
    } catch {
      this.inProcess = true;
      return null;
    }
  }

  /** The worker is gone: what it still held is analysed here. */
  private fallBack(worker: Worker): void {
    if (this.worker !== worker || this.closed) return;
    this.worker = null;
    this.inProcess = true;
    const held = [...this.pending.values()];
    this.pending.clear();
    for (const p of held) {
      try {
        p.resolve(runSweepJob(p.job));
      } catch (err) {
        p.reject(err instanceof Error ? err : new Error(String(err)));
      }
    }
  }
}
