/**
 * What the code lenses above each `point` header say: Solve (or "✓ Solved" when the block already holds
 * the solution to the displayed digits, or why it cannot be solved), Linearize (or that the generated block
 * is stale), Report and Sweep; and above each declared `sweep` block, Run sweep. The shell adds the commands. Pure.
 */
import type { Analysis } from '../pipeline/analysis';
import { declaredSweeps } from '../analysis/sweep';
import type { Span } from '../text';
import { linearBlockFor } from './linearBlock';
import { solveEdits } from './solve';
import { indexReductionBrief } from '../present/format';

export interface PointLens {
  point: string;
  /** The header line of the point block. */
  span: Span;
  solve: { title: string; state: 'solve' | 'solved' | 'failed'; message?: string };
  linearize: { title: string; block: 'none' | 'fresh' | 'stale' };
  report: { title: string };
  sweep: { title: string };
}

export function pointLenses(a: Analysis, digits = 4): PointLens[] {
  const out: PointLens[] = [];
  const seen = new Set<string>();
  for (const p of a.bound.points) {
    const name = p.name.name;
    if (!name || seen.has(name)) continue;
    seen.add(name);
    const r = solveEdits(a, name, digits);
    const solve: PointLens['solve'] = !r.ok
      ? { title: `✗ Cannot solve: ${r.brief}`, state: 'failed', message: r.message }
      : r.edits.length
        ? { title: 'Solve', state: 'solve' }
        : { title: '✓ Solved', state: 'solved' };
    const lb = linearBlockFor(a, name);
    const block = !lb ? 'none' : lb.digest?.text.trim() === a.digest(name) ? 'fresh' : 'stale';
    let linTitle = block === 'stale' ? 'Regenerate linear block' : block === 'fresh' ? 'Linearize (block up to date)' : 'Linearize';
    // a constrained model: the states chosen at this point and the equations differentiated
    const lin = r.ok && a.indexPlan ? a.linear(name) : undefined;
    if (lin?.ok && lin.reduction) linTitle += ` · ${indexReductionBrief(lin.reduction)}`;
    out.push({ point: name, span: p.headerSpan, solve, linearize: { title: linTitle, block }, report: { title: 'Report' }, sweep: { title: 'Sweep…' } });
  }
  return out;
}

/** The lens above a declared `sweep` block: Run sweep (with the resolved range), or why it cannot run. */
export interface SweepLens {
  /** Name of the sweep block. */
  sweep: string;
  /** The point it starts from ('' when the block names none). */
  point: string;
  /** The header line of the sweep block. */
  span: Span;
  title: string;
  /** The resolved range (declared unit of the varied name); undefined when the block has problems. */
  spec?: { sweep: string; vary: string; from: number; to: number; steps: number; log: boolean };
  /** Why it cannot run (the first P602 problem, or what the block lacks). */
  problem?: string;
}

export function sweepLenses(a: Analysis): SweepLens[] {
  const out: SweepLens[] = [];
  const seen = new Set<string>();
  for (const d of declaredSweeps(a)) {
    const b = d.block;
    const name = b.name.name;
    if (!name || seen.has(name)) continue;
    seen.add(name);
    const point = b.point?.name ?? '';
    const lens: SweepLens = { sweep: name, point, span: b.headerSpan, title: 'Run sweep' };
    if (d.spec && !d.diagnostics.length) {
      const s = d.spec;
      lens.spec = { sweep: name, vary: s.vary, from: s.from, to: s.to, steps: s.steps, log: !!s.log };
    } else {
      lens.problem = d.diagnostics[0]?.message
        ?? (!point ? 'the sweep names no point ("from POINT")' : !a.pointBlock(point) ? `no point named "${point}"` : !b.vary ? 'the sweep has no "vary NAME = FROM to TO steps N" line' : 'see the problems of the file');
      lens.title = '✗ Cannot run sweep: see the problems';
    }
    out.push(lens);
  }
  return out;
}
