/**
 * Tolerance samples in worker threads: the plan (core/analysis/sensitivity/sampling.ts) is cut into one
 * contiguous chunk per thread (the first runs in the calling thread while the others start); each worker analyses the model again from its text (and the disk, for the
 * documents it refers to) and evaluates its chunk with the core's pure `evaluateChunk`. The results come
 * back in plan order, so a seed gives the same bands whatever the number of workers.
 *
 * The worker runs this same script: the bundle (dist/cli.js) or this module in out/, recognised by its
 * workerData.
 */
import { isMainThread, parentPort, Worker, workerData } from 'worker_threads';
import { analyzeDocuments } from '../core/pipeline/analysis';
import { evaluateChunk, type SamplePlan, type SampleResult } from '../core/analysis/sensitivity';
import { cliSources } from './sourceHost';

interface ChunkJob {
  kind: 'poise-tolerance-samples';
  file: string;
  text: string;
  plan: SamplePlan;
  from: number;
  to: number;
}

/** Evaluates the plan's samples on `workers` threads, this one included (1: only this thread). */
export async function runSamples(file: string, text: string, plan: SamplePlan, workers: number): Promise<SampleResult[]> {
  const n = plan.count;
  const k = Math.max(1, Math.min(workers, n));
  if (k === 1) {
    const a = analyzeDocuments(cliSources(file, text), file)!;
    return evaluateChunk(a, plan, 0, n);
  }
  const bounds = Array.from({ length: k + 1 }, (_, i) => Math.round((i * n) / k));
  // chunks 1 … k−1 in worker threads; chunk 0 here, meanwhile (this thread has the model compiled already)
  const others = bounds.slice(1, k).map((from, i) => new Promise<SampleResult[]>((resolve, reject) => {
    const job: ChunkJob = { kind: 'poise-tolerance-samples', file, text, plan, from, to: bounds[i + 2] };
    const w = new Worker(__filename, { workerData: job });
    w.once('message', (r: SampleResult[]) => {
      resolve(r);
      void w.terminate();
    });
    w.once('error', reject);
    w.once('exit', (code) => {
      if (code !== 0) reject(new Error(`a sampling worker stopped with code ${code}`));
    });
  }));
  const a = analyzeDocuments(cliSources(file, text), file)!;
  const first = evaluateChunk(a, plan, 0, bounds[1]);
  const parts = [first, ...(await Promise.all(others))];
  return parts.flat();
}

if (!isMainThread && parentPort && (workerData as ChunkJob | undefined)?.kind === 'poise-tolerance-samples') {
  const job = workerData as ChunkJob;
  const a = analyzeDocuments(cliSources(job.file, job.text), job.file)!;
  parentPort.postMessage(evaluateChunk(a, job.plan, job.from, job.to));
}
