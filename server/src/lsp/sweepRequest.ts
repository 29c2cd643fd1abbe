/**
 * Sweep requests for the editor (see server/src/core/analysis/sweep.ts and present/sweepHtml.ts):
 *
 * - `poise/sweep` `{uri, point, vary, from, to, steps, log, sweep?}` → `{html, title}`: solves the point by
 *   continuation while `vary` moves from `from` to `to` (numbers in the declared unit of `vary`) in `steps`
 *   intervals (logarithmic when `log`), linearizes every value and renders the sweep page. With `sweep` (the
 *   name of a `sweep` block declared in the model) the block's current range is used instead, so that the
 *   page follows edits of the block; the explicit fields are the fallback when the block is gone.
 *   The page is rendered without a nonce: the VS Code client stamps its own (client/src/html.ts).
 * - `poise/sweepCandidates` `{uri, point}` → `SweepCandidate[]`: what can be swept at the point (constants
 *   and the values the point fixes with "="), with the current value and a suggested range, for the
 *   editor's pick list.
 *
 * Problems (document not open, unknown point, a name that cannot be varied, a bad range) answer with a
 * JSON-RPC error whose message says what is wrong; the registry keeps the server running.
 */
import { declaredSweeps, runSweep, sweepCandidates, variedProblem, type SweepSpec } from '../core/analysis/sweep';
import { sweepHtml } from '../core/present/sweepHtml';
import { documentPoint, fileName } from './documentPoint';
import { registerRequest } from './registry';

export interface SweepParams {
  uri: string;
  /** Point the sweep starts from; empty or missing: the `poise.activePoint` setting, else the first point. */
  point?: string;
  vary?: string;
  from?: number;
  to?: number;
  steps?: number;
  log?: boolean;
  /** Name of a declared `sweep` block: run it as the model now declares it. */
  sweep?: string;
}

export interface SweepPageResult {
  html: string;
  title: string;
}

export interface SweepCandidatesParams {
  uri: string;
  point?: string;
}

export type SweepCandidate = ReturnType<typeof sweepCandidates>[number];

const isNumber = (x: unknown): x is number => typeof x === 'number' && Number.isFinite(x);

registerRequest<SweepParams, SweepPageResult>('poise/sweep', async (params, ctx) => {
  const { a, point: asked, settings } = await documentPoint(ctx, 'poise/sweep', params);
  let spec: SweepSpec | undefined;
  if (typeof params.sweep === 'string' && params.sweep) {
    const declared = declaredSweeps(a).find((d) => d.block.name.name === params.sweep);
    if (declared) {
      if (declared.diagnostics.length) throw new Error(declared.diagnostics[0].message);
      if (!declared.spec) throw new Error(`sweep "${params.sweep}" is incomplete: it needs "from POINT" and a "vary NAME = FROM to TO steps N" line`);
      spec = declared.spec;
    }
  }
  if (!spec) {
    const { vary, from, to, steps } = params;
    if (typeof vary !== 'string' || !vary.trim()) throw new Error('poise/sweep needs the name to vary ("vary")');
    if (!isNumber(from) || !isNumber(to)) throw new Error('poise/sweep needs "from" and "to" as finite numbers (in the declared unit of the varied name)');
    if (!isNumber(steps)) throw new Error('poise/sweep needs "steps", a whole number of steps');
    const problem = variedProblem(a, asked, vary.trim());
    if (problem) throw new Error(problem);
    spec = { point: asked, vary: vary.trim(), from, to, steps, log: params.log === true };
  }
  if (!a.canSolve) throw new Error(`${fileName(params.uri)} has errors; fix them before sweeping`);
  const started = Date.now();
  const result = runSweep(a, spec);
  ctx.log(`poise/sweep ${spec.name ?? ''}${spec.name ? ' ' : ''}${spec.vary} from point ${spec.point}: ${result.points.length} of ${spec.steps + 1} values, ${result.crossings.length} stability change(s), ${Date.now() - started} ms`);
  if (result.stop?.kind === 'start' && !result.points.length) throw new Error(`the sweep cannot start: ${result.stop.message}`);
  const html = sweepHtml(result, { title: fileName(params.uri), digits: settings.digits });
  const title = spec.name ? `Sweep ${spec.name}: ${spec.vary} (${spec.point})` : `Sweep: ${spec.vary} (${spec.point})`;
  return { html, title };
});

registerRequest<SweepCandidatesParams, SweepCandidate[]>('poise/sweepCandidates', async (params, ctx) => {
  const { a, point } = await documentPoint(ctx, 'poise/sweepCandidates', params);
  return sweepCandidates(a, point);
});
