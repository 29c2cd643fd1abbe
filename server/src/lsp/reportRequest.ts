/**
 * The `poise/report` request: `{uri, point}` → `{html, title}`, the standalone report page of one point of
 * an open document (see server/src/core/report.ts). The page is rendered without a nonce: the VS Code
 * client stamps its own nonce on the inline script and adds its policy (client/src/html.ts); the page's
 * own policy allows nothing from the network either.
 */
import { buildReport, renderReportHtml } from '../core/report';
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

function fileName(uri: string): string {
  const last = uri.replace(/[?#].*$/, '').split('/').pop() ?? uri;
  try {
    return decodeURIComponent(last);
  } catch {
    return last;
  }
}

registerRequest<ReportParams, ReportResult>('poise/report', async (params, ctx) => {
  if (!params || typeof params.uri !== 'string') throw new Error('poise/report needs {uri, point}');
  const a = ctx.analysis(params.uri);
  if (!a) throw new Error(`${fileName(params.uri)} is not open in the editor`);
  const settings = await ctx.settings(params.uri);
  const names = a.pointNames;
  let point = params.point?.trim() || (settings.activePoint && names.includes(settings.activePoint) ? settings.activePoint : names[0]);
  if (!point) throw new Error(`${fileName(params.uri)} has no point: add a "point NAME:" block`);
  if (!names.includes(point)) throw new Error(`${fileName(params.uri)} has no point named "${point}"`);
  const started = Date.now();
  // the editor refreshes the page while the model is edited: keep the validity search short there
  const data = buildReport(a, point, { title: fileName(params.uri), validityBudgetMs: 1500 });
  ctx.log(`poise/report ${point}: ${Date.now() - started} ms`);
  point = data.point;
  return { html: renderReportHtml(data), title: `Report: ${point}` };
});
