/**
 * The `poise/export` request: `{uri, point, format, digits?}` → `{text}`, the linear model at a point of an
 * open document in one export format (json, csv, markdown, latex, numpy; see server/src/core/present/exports.ts and
 * docs/exports.md). Numbers are written exactly (the shortest text that reads back to the same double)
 * unless `digits` asks for fewer significant digits. A point that does not solve or cannot be linearized,
 * an unknown format or a closed document answer with a JSON-RPC error whose message says why.
 */
import { EXPORT_FORMATS, exportLinear, type ExportFormat } from '../core/present/exports';
import { documentPoint, fileName } from './documentPoint';
import { registerRequest } from './registry';

export interface ExportParams {
  uri: string;
  /** Point name; empty or missing: the `poise.activePoint` setting, else the first point. */
  point?: string;
  format: ExportFormat;
  /** Significant digits (1–17); missing: exact. */
  digits?: number;
}

export interface ExportResult {
  text: string;
}

registerRequest<ExportParams, ExportResult>('poise/export', async (params, ctx) => {
  if (!params || typeof params.uri !== 'string') throw new Error('poise/export needs {uri, point, format}');
  const format = params.format;
  if (typeof format !== 'string' || !(EXPORT_FORMATS as readonly string[]).includes(format)) {
    throw new Error(`unknown export format "${String(format)}"; use one of ${EXPORT_FORMATS.join(', ')}`);
  }
  const digits = params.digits;
  if (digits !== undefined && (typeof digits !== 'number' || !Number.isInteger(digits) || digits < 1 || digits > 17)) {
    throw new Error('"digits" must be a whole number from 1 to 17 (or left out for exact numbers)');
  }
  const { a, point } = await documentPoint(ctx, 'poise/export', params);
  if (!a.canSolve) throw new Error(`${fileName(params.uri)} has errors; fix them before exporting`);
  // exportLinear throws an Error saying why when the point does not solve or cannot be linearized
  return { text: exportLinear(a, point, format, { digits }) };
});
