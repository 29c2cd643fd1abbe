/**
 * The `poise/report` request: `{uri, point}` → `{html, title}`, the standalone report page of one point of
 * an open document (see server/src/core/analysis/report.ts). The page is rendered without a nonce: the VS Code
 * client stamps its own nonce on the inline script and adds its policy (client/src/html.ts); the page's
 * own policy allows nothing from the network either.
 */
import { buildReport } from '../core/analysis/report';
import { renderReportHtml } from '../core/present/reportHtml';
import { documentPoint, fileName } from './documentPoint';
import { registerRequest } from './registry';

export interface ReportParams {
  uri: string;
  /** Point name; empty or missing: the `poise.activePoint` setting, else the first point. */
  point?: string;
}

export interface ReportResult {
  html: string;
  title: string;
}

registerRequest<ReportParams, ReportResult>('poise/report', async (params, ctx) => {
  const { a, point } = await documentPoint(ctx, 'poise/report', params);
  const started = Date.now();
  // the editor refreshes the page while the model is edited: keep the validity search short there
  const data = buildReport(a, point, { title: fileName(params.uri), validityBudgetMs: 1500 });
  ctx.log(`poise/report ${point}: ${Date.now() - started} ms`);
  return { html: renderReportHtml(data), title: `Report: ${data.point}` };
});
