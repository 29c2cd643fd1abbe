/**
 * Solve a point and write the solution back into its block: each `~` line's value becomes the solved
 * value (in the unit the line wrote, else the declared unit), unknowns the block does not list get a new
 * `name ~ value [unit]` line, `=` lines never change. Applying the edits twice equals applying them once.
 * Also the brief status of a point that the Solve lens shows. Pure.
 */
import type { Analysis } from '../pipeline/analysis';
import type * as A from '../syntax/ast';
import { findInExpr } from '../syntax/walk';
import type { Diagnostic } from '../diagnostics';
import { formatNumber } from '../algebra/expr';
import { declaredValue } from '../solve/linearizer';
import type { PointSolution } from '../solve/pointSolver';
import { dimsEqual, parseUnit } from '../semantics/units';
import { eol, type TextEdit } from './edits';
import { unitSuffix } from '../semantics/units';

export type PointStatus =
  | { ok: true; solution: PointSolution }
  | { ok: false; /** a few words for a lens title */ brief: string; /** the full explanation */ message: string; diagnostic?: Diagnostic };

/** Whether a point solves, and if not, why (briefly and in full). */
export function pointStatus(a: Analysis, point: string): PointStatus {
  const block = a.pointBlock(point);
  if (!block) return { ok: false, brief: 'no such point', message: `There is no point "${point}" in this file.` };
  if (!a.canSolve) {
    const first = a.diagnostics.find((d) => d.severity === 'error');
    return {
      ok: false,
      brief: 'fix the model errors first',
      message: `Point "${point}" cannot be solved while the model has errors${first ? `: ${first.message}` : '.'}`,
      diagnostic: first,
    };
  }
  const sol = a.point(point);
  if (!sol) return { ok: false, brief: 'cannot solve', message: `Point "${point}" cannot be solved.` };
  if (sol.ok) return { ok: true, solution: sol };
  const d = sol.diagnostics.find((x) => x.severity === 'error');
  return { ok: false, brief: d ? briefReason(d) : 'cannot solve', message: d ? d.message : `Point "${point}" did not solve.`, diagnostic: d };
}

function briefReason(d: Diagnostic): string {
  const data = (d.data ?? {}) as { equations?: number; unknowns?: number };
  switch (d.code) {
    case 'P501':
      return data.equations !== undefined && data.unknowns !== undefined
        ? `unbalanced (${data.equations} equations, ${data.unknowns} unknowns)`
        : 'unbalanced';
    case 'P502': return 'did not converge';
    case 'P503': return 'no real solution from these guesses';
    case 'P504': return 'domain error';
    case 'P506': return 'steady state not isolated';
    case 'P507': return 'singular algebraic loop';
    case 'P508': return 'fixed values contradict an equation';
    default: return d.code;
  }
}

export type SolveEdits = { ok: true; edits: TextEdit[] } | { ok: false; brief: string; message: string };

/** The edits that write the solved values of `point` into its block (empty when it already holds them). */
export function solveEdits(a: Analysis, point: string, digits = 4): SolveEdits {
  const st = pointStatus(a, point);
  if (!st.ok) return st;
  const sol = st.solution;
  const block = sol.block;
  const lm = a.lowered;
  const edits: TextEdit[] = [];
  const listed = new Set<string>();
  // a family written on one line (`h ~ 1 [m]`) stands for several elements with one value span: their
  // solved values are written back as a list, `h ~ {…} [m]`
  const family = new Map<string, { span: A.Expr['span']; values: string[]; unit: string; changed: boolean }>();
  const spanCount = new Map<string, number>();
  for (const l of block.lines) spanCount.set(`${l.value.span.start}:${l.value.span.end}`, (spanCount.get(`${l.value.span.start}:${l.value.span.end}`) ?? 0) + 1);
  for (const l of block.lines) {
    listed.add(l.name.name);
    if (l.mode !== 'guess' || l.primes) continue;
    const s = a.bound.symbols.get(l.name.name);
    if (!s || s.kind === 'const') continue;
    const id = lm.slotOf(s);
    if (id < 0) continue;
    const slot = lm.slots[id];
    const unitRef = firstUnit(l.value);
    const parsed = unitRef ? parseUnit(unitRef.text) : undefined;
    // the line's own unit, when it is one that converts to the declared unit
    const u = parsed && typeof parsed !== 'string' && dimsEqual(parsed.dims, slot.unit.dims) ? parsed : undefined;
    const inUnit = (si: number) => (u ? (si - u.offset) / u.scale : declaredValue(slot, si));
    const solved = formatNumber(inUnit(sol.values[id]), digits);
    const had = formatNumber(inUnit(sol.guesses[id]), digits);
    const unitText = unitRef && u ? ' ' + a.text.slice(unitRef.span.start, unitRef.span.end) : '';
    const key = `${l.value.span.start}:${l.value.span.end}`;
    if ((spanCount.get(key) ?? 0) > 1) {
      const g = family.get(key) ?? { span: l.value.span, values: [], unit: unitText, changed: false };
      g.values.push(solved);
      g.changed ||= solved !== had;
      family.set(key, g);
      continue;
    }
    if (solved === had) continue;
    const newText = solved + unitText;
    if (a.text.slice(l.value.span.start, l.value.span.end) !== newText) edits.push({ span: l.value.span, newText });
  }
  for (const g of family.values()) if (g.changed) edits.push({ span: g.span, newText: `{${g.values.join(', ')}}${g.unit}` });
  const added: string[] = [];
  const indent = blockIndent(a, block);
  for (const id of sol.unknowns) {
    const slot = lm.slots[id];
    if (slot.order !== 0 || listed.has(slot.name)) continue;
    const unit = unitSuffix(slot.unit.text);
    added.push(`${indent}${slot.name} ~ ${formatNumber(declaredValue(slot, sol.values[id]), digits)}${unit}`);
  }
  if (added.length) {
    const nl = eol(a.text);
    const at = a.lines.lineEnd(a.lines.position(block.span.end).line);
    edits.push({ span: { start: at, end: at }, newText: nl + added.join(nl) });
  }
  return { ok: true, edits };
}

/** The indentation of a block's lines (two spaces when it has none yet). */
export function blockIndent(a: Analysis, block: { lines?: { span: { start: number } }[]; span: { start: number } }): string {
  const first = block.lines?.[0];
  if (!first) return '  ';
  const line = a.lines.position(first.span.start).line;
  const start = a.lines.lineStarts[line];
  const ws = a.text.slice(start, first.span.start);
  return /^[ \t]+$/.test(ws) ? ws : '  ';
}

/** The first unit bracket written in a value expression. */
function firstUnit(e: A.Expr): A.UnitRef | undefined {
  return findInExpr(e, (x) => (x.kind === 'number' ? x.unit : undefined));
}
