/**
 * The custom requests of the Poise language server, typed once and shared by the server and the VS Code
 * client (client/src/extension.ts imports this file). Only the protocol library's `RequestType` is used
 * here, so the client bundle stays free of the server and the core.
 *
 * Every request answers an error whose message says what is wrong when the document is not open, the
 * point does not exist or the parameters are malformed (code -32602, invalid params), and the protocol's
 * "request cancelled" error (-32800) when the client cancels it.
 */
import { RequestType } from 'vscode-jsonrpc';

/** A point of an open document; an empty or missing point means the `poise.activePoint` setting, else the first point. */
export interface PointParams {
  uri: string;
  point?: string;
}

export interface PageResult {
  html: string;
  title: string;
}

/** `poise/report` {uri, point} → {html, title}: the standalone report page of one point. */
export type ReportParams = PointParams;
export const ReportRequest = new RequestType<ReportParams, PageResult, void>('poise/report');

/**
 * `poise/sweep` {uri, point, vary, from, to, steps, log, sweep?} → {html, title}: the point solved by
 * continuation while `vary` moves from `from` to `to` (declared unit of `vary`) in `steps` intervals
 * (logarithmic when `log`). With `sweep` (the name of a declared `sweep` block) the block's current range is
 * used; the explicit fields are the fallback when the block is gone.
 */
export interface SweepParams extends PointParams {
  vary?: string;
  from?: number;
  to?: number;
  steps?: number;
  log?: boolean;
  sweep?: string;
}
export const SweepRequest = new RequestType<SweepParams, PageResult, void>('poise/sweep');

/** What can be swept at a point (constants and the values the point fixes), with a suggested range. */
export interface SweepCandidate {
  name: string;
  kind: string;
  /** declared unit, '' when dimensionless */
  unit: string;
  /** value at the point, declared unit */
  value: number;
  from: number;
  to: number;
}
/** `poise/sweepCandidates` {uri, point} → SweepCandidate[]. */
export type SweepCandidatesParams = PointParams;
export const SweepCandidatesRequest = new RequestType<SweepCandidatesParams, SweepCandidate[], void>('poise/sweepCandidates');

export const EXPORT_FORMAT_NAMES = ['json', 'csv', 'markdown', 'latex', 'numpy'] as const;
export type ExportFormatName = (typeof EXPORT_FORMAT_NAMES)[number];

/** `poise/export` {uri, point, format, digits?} → {text}: the linear model in one export format. */
export interface ExportParams extends PointParams {
  format: ExportFormatName;
  /** Significant digits (1–17); missing: exact. */
  digits?: number;
}
export interface ExportResult {
  text: string;
}
export const ExportRequest = new RequestType<ExportParams, ExportResult, void>('poise/export');

/** `poise/pointAt` {uri, position} → {point}: the point an editor command at the cursor applies to. */
export interface PointAtParams {
  uri: string;
  position: { line: number; character: number };
}
export interface PointAtResult {
  point: string | null;
}
export const PointAtRequest = new RequestType<PointAtParams, PointAtResult, void>('poise/pointAt');

/** `poise/expanded` {uri} → {text}: the flat model the document stands for (families and parts expanded; read-only view). */
export interface ExpandedParams {
  uri: string;
}
export interface ExpandedResult {
  text: string;
}
export const ExpandedRequest = new RequestType<ExpandedParams, ExpandedResult, void>('poise/expanded');

/** Commands the server executes (workspace/executeCommand) with arguments [uri, point]. */
export const SOLVE_COMMAND = 'poise.server.solvePoint';
export const LINEARIZE_COMMAND = 'poise.server.linearizePoint';
/** Client-side commands the lenses invoke (registered by the VS Code extension). */
export const REPORT_COMMAND = 'poise.openReport';
export const SWEEP_COMMAND = 'poise.sweep';
/** A sweep the Run sweep lens passes to SWEEP_COMMAND as its third argument. */
export interface SweepSpecArg {
  sweep?: string;
  vary: string;
  from: number;
  to: number;
  steps: number;
  log?: boolean;
}
