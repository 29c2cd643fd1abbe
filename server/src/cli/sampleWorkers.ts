/**
 * Tolerance samples in worker threads for the command: the shared runner (server/src/shell/sampleWorkers.ts)
 * with the model read from the disk, the first chunk on this thread while the others start.
 */
import { analyzeDocuments } from '../core/pipeline/analysis';
import type { SamplePlan, SampleResult } from '../core/analysis/sensitivity';
import { filesOf, runSampleChunks } from '../shell/sampleWorkers';
import { cliSources } from './sourceHost';

/** Evaluates the plan's samples on `workers` threads, this one included (1: only this thread). */
export async function runSamples(file: string, text: string, plan: SamplePlan, workers: number): Promise<SampleResult[]> {
  const a = analyzeDocuments(cliSources(file, text), file)!;
  const run = runSampleChunks({ root: file, files: filesOf(a), disk: 'path' }, { plan }, plan.count, workers, a);
  return (await run.done).results;
}
