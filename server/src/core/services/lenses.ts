/**
 * What the code lenses above each `point` header say: Solve (or "✓ Solved" when the block already holds
 * the solution to the displayed digits, or why it cannot be solved), Linearize (or that the generated block
 * is stale), Report and Sweep. The shell adds the commands. Pure.
 */
import type { Analysis } from '../analysis';
import type { Span } from '../text';
import { linearBlockFor } from './linearBlock';
import { solveEdits } from './solve';

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
    const linTitle = block === 'stale' ? 'Regenerate linear block' : block === 'fresh' ? 'Linearize (block up to date)' : 'Linearize';
    out.push({ point: name, span: p.headerSpan, solve, linearize: { title: linTitle, block }, report: { title: 'Report' }, sweep: { title: 'Sweep…' } });
  }
  return out;
}
