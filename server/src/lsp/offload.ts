/**
 * Long work off the event loop: a worker thread that runs jobs (server/src/lsp/jobs.ts) one at a time.
 * A job cancelled while it waits is dropped; a job cancelled while it runs ends with its worker (the thread
 * is terminated and a fresh one started for the next job), so a cancelled report or a superseded point
 * solve stops at once, whatever the core is doing.
 */
import { existsSync } from 'fs';
import * as path from 'path';
import { Worker } from 'worker_threads';
import type { CancellationToken } from 'vscode-languageserver/node';
import type { Job, JobResult } from './jobs';
import type { DocumentSnapshot, WorkerReply, WorkerRequest } from './worker';

/** Thrown (rejected) when a job was cancelled. */
export class Cancelled extends Error {
  constructor() {
    super('cancelled');
  }
}

/** A job's refusal with a message for the user (a JobFailure in the worker), or a failure inside it. */
export class OffloadError extends Error {
  constructor(message: string, readonly failure: boolean) {
    super(message);
  }
}

interface Pending {
  request: WorkerRequest;
  tag?: string;
  /** Someone waits for it (a hover, a lens): it goes before background work still waiting. */
  interactive: boolean;
  resolve: (v: unknown) => void;
  reject: (e: Error) => void;
  dispose?: () => void;
}

/** The script a worker runs: the compiled main.js beside this file, else this bundle (dist/server.js). */
function workerScript(): string {
  const beside = path.join(__dirname, 'main.js');
  return existsSync(beside) ? beside : __filename;
}

export class Offload {
  private worker: Worker | undefined;
  private running: Pending | undefined;
  private readonly queue: Pending[] = [];
  private nextId = 1;
  private disposed = false;

  constructor(private readonly name: string, private readonly log: (message: string) => void) {}

  /**
   * Runs `job` on `doc` in the worker. `tag` names background work a newer edit supersedes (see
   * cancelTag; untagged jobs are interactive and go first); the token cancels it. Rejects with Cancelled
   * or OffloadError.
   */
  run<J extends Job>(doc: DocumentSnapshot, job: J, token?: CancellationToken, tag?: string): Promise<JobResult<J>> {
    return new Promise<JobResult<J>>((resolve, reject) => {
      if (this.disposed || token?.isCancellationRequested) return reject(new Cancelled());
      const p: Pending = { request: { id: this.nextId++, doc, job }, tag, interactive: tag === undefined, resolve: resolve as (v: unknown) => void, reject };
      if (token) {
        const sub = token.onCancellationRequested(() => this.cancel(p));
        p.dispose = () => sub.dispose();
      }
      if (p.interactive) {
        const at = this.queue.findIndex((q) => !q.interactive);
        this.queue.splice(at < 0 ? this.queue.length : at, 0, p);
      } else {
        this.queue.push(p);
      }
      this.pump();
    });
  }

  /** Cancels every queued or running job with this tag. */
  cancelTag(tag: string): void {
    for (const p of [...this.queue, ...(this.running ? [this.running] : [])]) if (p.tag === tag) this.cancel(p);
  }

  dispose(): void {
    this.disposed = true;
    for (const p of this.queue.splice(0)) this.settle(p, new Cancelled());
    if (this.running) this.settle(this.running, new Cancelled());
    this.running = undefined;
    void this.worker?.terminate();
    this.worker = undefined;
  }

  private cancel(p: Pending): void {
    const i = this.queue.indexOf(p);
    if (i >= 0) {
      this.queue.splice(i, 1);
      this.settle(p, new Cancelled());
    } else if (this.running === p) {
      // the core cannot be interrupted: end the thread and start afresh for the next job
      this.running = undefined;
      this.settle(p, new Cancelled());
      this.restart();
      this.pump();
    }
  }

  private settle(p: Pending, outcome: { value: unknown } | Error): void {
    p.dispose?.();
    if (outcome instanceof Error) p.reject(outcome);
    else p.resolve(outcome.value);
  }

  private restart(): void {
    const w = this.worker;
    this.worker = undefined;
    if (w) {
      w.removeAllListeners();
      w.on('error', () => undefined);
      void w.terminate();
    }
  }

  private spawn(): Worker {
    const w = new Worker(workerScript(), { argv: ['--poise-worker'] });
    w.unref();
    w.on('message', (reply: WorkerReply) => {
      const p = this.running;
      if (!p || p.request.id !== reply.id) return;
      this.running = undefined;
      this.settle(p, reply.ok ? { value: reply.result } : new OffloadError(reply.message, reply.failure));
      this.pump();
    });
    const lost = (why: string) => {
      if (this.worker !== w) return;
      this.worker = undefined;
      const p = this.running;
      this.running = undefined;
      this.log(`${this.name} worker: ${why}`);
      if (p) this.settle(p, new OffloadError(why, false));
      this.pump();
    };
    w.on('error', (e) => lost(`failed: ${e instanceof Error ? e.stack ?? e.message : String(e)}`));
    w.on('exit', (code) => lost(`exited with code ${code}`));
    return w;
  }

  private pump(): void {
    if (this.running || this.disposed) return;
    const p = this.queue.shift();
    if (!p) return;
    this.running = p;
    this.worker ??= this.spawn();
    this.worker.postMessage(p.request);
  }
}
