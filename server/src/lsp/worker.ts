/**
 * The worker-thread side of server/src/lsp/offload.ts: runs jobs (server/src/lsp/jobs.ts) on the pure
 * core, keeping the analysis of the last version of each document it was sent, so that a hover after the
 * diagnostics pass finds the points already solved. Started from the same script as the server (main.ts
 * runs this when it is not the main thread).
 */
import { parentPort } from 'worker_threads';
import { analyzeDocuments, type Analysis } from '../core/pipeline/analysis';
import { memoryHost } from '../core/sources';
import { JobFailure, runJob, type Job } from './jobs';

export interface DocumentSnapshot {
  uri: string;
  version: number;
  text: string;
  warnUnused: boolean;
  /** The texts of the files the model brings in (parts files), by address. */
  files?: Record<string, string>;
}

export interface WorkerRequest {
  id: number;
  doc: DocumentSnapshot;
  job: Job;
}

export type WorkerReply = { id: number; ok: true; result: unknown } | { id: number; ok: false; failure: boolean; message: string };

export function runWorker(): void {
  const port = parentPort;
  if (!port) return;
  const cache = new Map<string, { version: number; warnUnused: boolean; text: string; files: string; analysis: Analysis }>();
  port.on('message', (m: WorkerRequest) => {
    let reply: WorkerReply;
    try {
      let hit = cache.get(m.doc.uri);
      const files = JSON.stringify(m.doc.files ?? {});
      if (!hit || hit.version !== m.doc.version || hit.warnUnused !== m.doc.warnUnused || hit.text !== m.doc.text || hit.files !== files) {
        const host = memoryHost({ ...(m.doc.files ?? {}), [m.doc.uri]: m.doc.text });
        hit = { version: m.doc.version, warnUnused: m.doc.warnUnused, text: m.doc.text, files, analysis: analyzeDocuments(host, m.doc.uri, { warnUnused: m.doc.warnUnused })! };
        cache.set(m.doc.uri, hit);
      }
      reply = { id: m.id, ok: true, result: runJob(hit.analysis, m.job) };
    } catch (e) {
      reply = { id: m.id, ok: false, failure: e instanceof JobFailure, message: e instanceof Error ? e.message : String(e) };
    }
    port.postMessage(reply);
  });
}
