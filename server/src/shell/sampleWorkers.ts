/**
 * Tolerance samples in worker threads, shared by the shells (the CLI's `poise sensitivity` and report page,
 * the language server's hovers and report): the plan (core/analysis/sensitivity/sampling.ts) is cut into one
 * contiguous chunk per thread; each worker analyses the model again from the texts it is given (the model
 * and the files it brings in, anything else such as a table's CSV file from the disk) and evaluates its chunk
 * with the core's pure `evaluateChunk`. The results come back in plan order, so a seed gives the same bands
 * whatever the number of workers. A run can be cancelled: its threads are terminated at once.
 *
 * The worker runs the script this module is in: the bundle (dist/cli.js, dist/server.js) or this module in
 * out/, recognised by its workerData.
 */
import * as fs from 'fs';
import { fileURLToPath } from 'url';
import { isMainThread, parentPort, Worker, workerData } from 'worker_threads';
import { analyzeDocuments, type Analysis } from '../core/pipeline/analysis';
import { evaluateChunk, samplePlan, type SamplePlan, type SampleResult } from '../core/analysis/sensitivity';
import { layeredHost, memoryHost, type SourceHost } from '../core/sources';

/** Where a worker reads the model: the texts already read, then the disk (paths for the CLI, file: URIs for the server). */
export interface SampleSource {
  root: string;
  /** The root's text and the texts of the files it brings in, by address. */
  files: Record<string, string>;
  disk: 'path' | 'fileUri';
  warnUnused?: boolean;
}

/** What the samples are of: a plan made already, or the point, count and seed to make it from (in each worker: it is deterministic). */
export type SampleSpec = { plan: SamplePlan } | { point: string; count: number; seed: number };

interface ChunkJob {
  kind: 'poise-tolerance-samples';
  source: SampleSource;
  spec: SampleSpec;
  from: number;
  to: number;
}

/** The answer of one chunk: the plan it used (so the caller that made none has it) and its results. */
interface ChunkReply {
  plan: SamplePlan;
  results: SampleResult[];
  error?: string;
}

export interface SampleRun {
  /** The plan and every sample's result, in plan order; rejects when cancelled or when a worker fails. */
  done: Promise<{ plan: SamplePlan; results: SampleResult[] }>;
  /** Stops the run: the threads are terminated and `done` rejects with SamplingCancelled. */
  cancel(): void;
}

export class SamplingCancelled extends Error {
  constructor() {
    super('sampling cancelled');
  }
}

function diskHost(kind: SampleSource['disk']): SourceHost {
  return {
    read(address) {
      try {
        if (kind === 'fileUri') return address.startsWith('file:') ? fs.readFileSync(fileURLToPath(address), 'utf8') : undefined;
        return fs.readFileSync(address, 'utf8');
      } catch {
        return undefined;
      }
    },
  };
}

/** The analysis a worker makes of the source. */
export function analyzeSource(src: SampleSource): Analysis {
  return analyzeDocuments(layeredHost(memoryHost(src.files), diskHost(src.disk)), src.root, { warnUnused: src.warnUnused ?? true })!;
}

/** The texts an analysis read (its root and the files it brought in), for the workers. */
export function filesOf(a: Analysis): Record<string, string> {
  const out: Record<string, string> = {};
  for (const d of a.documents.list) out[d.uri] = d.text;
  return out;
}

function planOf(a: Analysis, spec: SampleSpec): SamplePlan {
  return 'plan' in spec ? spec.plan : samplePlan(a, spec.point, spec.count, spec.seed);
}

/**
 * Evaluates the samples on `workers` threads. With `here` (an analysis of the same source, on this thread)
 * the first chunk runs on this thread while the others start (the CLI: nothing else waits for it); without
 * it every chunk runs in a worker (the language server: its thread stays free).
 */
export function runSampleChunks(source: SampleSource, spec: SampleSpec, count: number, workers: number, here?: Analysis): SampleRun {
  const threads: Worker[] = [];
  let cancelled = false;
  let cancelRun: (() => void) | undefined;
  const done = new Promise<{ plan: SamplePlan; results: SampleResult[] }>((resolve, reject) => {
    cancelRun = () => reject(new SamplingCancelled());
    const k = Math.max(1, Math.min(workers, count));
    const bounds = Array.from({ length: k + 1 }, (_, i) => Math.round((i * count) / k));
    const chunk = (i: number) => new Promise<ChunkReply>((res, rej) => {
      const job: ChunkJob = { kind: 'poise-tolerance-samples', source, spec, from: bounds[i], to: bounds[i + 1] };
      const w = new Worker(__filename, { workerData: job });
      threads.push(w);
      w.once('message', (r: ChunkReply) => {
        void w.terminate();
        if (r.error) rej(new Error(r.error));
        else res(r);
      });
      w.once('error', rej);
      w.once('exit', (code) => {
        if (code !== 0) rej(cancelled ? new SamplingCancelled() : new Error(`a sampling worker stopped with code ${code}`));
      });
    });
    const first = here ? 1 : 0;
    const others = Array.from({ length: k - first }, (_, j) => chunk(j + first));
    let local: ChunkReply | undefined;
    if (here) {
      const plan = planOf(here, spec);
      local = { plan, results: evaluateChunk(here, plan, 0, bounds[1]) };
    }
    Promise.all(others).then((parts) => {
      const all = local ? [local, ...parts] : parts;
      resolve({ plan: all[0].plan, results: all.flatMap((p) => p.results) });
    }, (e) => {
      for (const w of threads) void w.terminate();
      reject(e);
    });
  });
  return {
    done,
    cancel() {
      if (cancelled) return;
      cancelled = true;
      for (const w of threads) void w.terminate();
      cancelRun?.();
    },
  };
}

if (!isMainThread && parentPort && (workerData as ChunkJob | undefined)?.kind === 'poise-tolerance-samples') {
  const job = workerData as ChunkJob;
  let reply: ChunkReply;
  try {
    const a = analyzeSource(job.source);
    const plan = planOf(a, job.spec);
    reply = { plan, results: evaluateChunk(a, plan, job.from, job.to) };
  } catch (e) {
    reply = { plan: { point: '', seed: 0, count: 0, constants: [], unit: [] }, results: [], error: e instanceof Error ? e.message : String(e) };
  }
  parentPort.postMessage(reply);
}
