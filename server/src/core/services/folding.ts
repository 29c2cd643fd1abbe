/** Folding ranges: point, linear, sweep and part blocks, and runs of two or more comment lines. Pure. */
import type { Analysis } from '../pipeline/analysis';

export interface Fold {
  startLine: number;
  endLine: number;
  kind?: 'comment' | 'region';
}

export function foldingRanges(a: Analysis): Fold[] {
  const out: Fold[] = [];
  for (const st of a.parsed.file.statements) {
    if (st.kind !== 'point' && st.kind !== 'linear' && st.kind !== 'sweep') continue;
    const s = a.lines.position(st.span.start).line;
    const e = a.lines.position(st.span.end).line;
    if (e > s) out.push({ startLine: s, endLine: e, kind: 'region' });
  }
  for (const st of a.source.file.statements) {
    if (st.kind !== 'part') continue;
    const s = a.lines.position(st.span.start).line;
    const e = a.lines.position(st.span.end).line;
    if (e > s) out.push({ startLine: s, endLine: e, kind: 'region' });
  }
  // runs of whole-line comments
  let runStart = -1;
  let prev = -2;
  const flush = () => {
    if (runStart >= 0 && prev > runStart) out.push({ startLine: runStart, endLine: prev, kind: 'comment' });
  };
  for (const c of a.parsed.file.comments) {
    const p = a.lines.position(c.start);
    const whole = a.lines.lineText(p.line).slice(0, p.character).trim() === '';
    if (!whole) continue;
    if (p.line === prev + 1) prev = p.line;
    else {
      flush();
      runStart = p.line;
      prev = p.line;
    }
  }
  flush();
  return out.sort((x, y) => x.startLine - y.startLine);
}
