/**
 * Checks of the declared `sweep` blocks (P602) and of what can be varied at a point: static, no
 * solving beyond the point's constants. The pipeline reports these diagnostics; the sweep itself
 * (analysis/sweep.ts) runs a checked spec.
 */
import type * as A from '../syntax/ast';
import type { BoundModel } from '../semantics/binder';
import { diag, type Diagnostic } from '../diagnostics';
import { formatNumber } from '../algebra/expr';
import { constExprValue, type LoweredModel, type Slot } from '../model/model';
import { declaredValue } from '../solve/linearizer';
import { pointSetup } from '../solve/pointSolver';
import type { Span } from '../text';
import { hasUnitLiteral } from '../semantics/unitChecker';
import { unitSuffix, unitText } from '../semantics/units';

/** What a sweep check needs of an analysis (an `Analysis` is one). */
export interface SweepContext {
  readonly bound: BoundModel;
  readonly lowered: LoweredModel;
  pointBlock(name?: string): A.PointBlock | undefined;
}

/** What to sweep. `from` and `to` are in the declared unit of the varied name. */
export interface SweepSpec {
  point: string;
  vary: string;
  from: number;
  to: number;
  /** Number of intervals: the sweep has steps + 1 values, both ends included. */
  steps: number;
  log?: boolean;
  /** Name of the declared `sweep` block, if it came from one. */
  name?: string;
}

/** Most steps a sweep may take. */
export const MAX_STEPS = 100000;

export interface DeclaredSweep {
  block: A.SweepBlock;
  spec?: SweepSpec;
  diagnostics: Diagnostic[];
}

const kindWord: Record<string, string> = { const: 'a constant', input: 'an input', state: 'a state', var: 'a variable', output: 'an output' };

/**
 * Checks the varied name against a point: returns a message when it cannot be swept there (it must be
 * a constant, or an input, state, var or output the point fixes with "=").
 */
export function variedProblem(a: SweepContext, point: string, name: string): string | undefined {
  const s = a.bound.symbols.get(name);
  if (!s) return `unknown name "${name}"`;
  if (s.kind === 'const') return undefined;
  const block = a.pointBlock(point);
  if (!block) return `no point named "${point}"`;
  const line = block.lines.find((l) => l.name.name === name);
  if (!line || line.mode !== 'fixed') {
    return `"${name}" is ${kindWord[s.kind]} that point "${point}" ${line ? 'solves for (written with "~")' : 'does not fix'}; vary a constant, or a value the point fixes with "=" (add "${name} = …" to the point).`;
  }
  return undefined;
}

export function varSlot(a: SweepContext, name: string): Slot | undefined {
  const s = a.bound.symbols.get(name);
  if (!s) return undefined;
  const id = a.lowered.slotOf(s, 0);
  return id >= 0 ? a.lowered.slots[id] : undefined;
}

/** The declared sweep blocks with their resolved specs and P602 problems (static: no solving). */
export function declaredSweeps(a: SweepContext): DeclaredSweep[] {
  const out: DeclaredSweep[] = [];
  for (const block of a.bound.sweeps) {
    const ds: Diagnostic[] = [];
    const res: DeclaredSweep = { block, diagnostics: ds };
    out.push(res);
    const name = block.name.name;
    const v = block.vary;
    // unknown points and names and unit mismatches are reported by the binder and unit checker (P213, P201, P308)
    if (!name || !block.point || !v || !a.pointBlock(block.point.name)) continue;
    const s = a.bound.symbols.get(v.name.name);
    if (!s) continue;
    const point = block.point.name;
    const problem = variedProblem(a, point, v.name.name);
    if (problem) {
      ds.push(diag('P602', v.name.span, { name, detail: problem }, { data: { sweep: name, point, vary: v.name.name } }));
      continue;
    }
    const slot = varSlot(a, v.name.name);
    if (!slot) continue;
    const pb = a.pointBlock(point)!;
    let consts: Float64Array;
    try {
      consts = pointSetup(a.bound, a.lowered, pb).values;
    } catch {
      continue;
    }
    const bound = (e: A.Expr): number => {
      const x = constExprValue(e, a.bound, a.lowered, consts);
      return hasUnitLiteral(e) ? declaredValue(slot, x) : x;
    };
    const from = bound(v.from);
    const to = bound(v.to);
    const unit = unitSuffix(slot.unit.text);
    const spanOf = (which: 'from' | 'to'): Span => (which === 'from' ? v.from.span : v.to.span);
    let bad = false;
    for (const [w, x] of [['from', from], ['to', to]] as const) {
      if (!Number.isFinite(x)) {
        ds.push(diag('P602', spanOf(w), { name, detail: `the ${w === 'from' ? 'start' : 'end'} value is not a finite number.` }));
        bad = true;
      } else if (v.log && x <= 0) {
        ds.push(diag('P602', spanOf(w), { name, detail: `a "log" sweep needs values above zero, but the ${w === 'from' ? 'start' : 'end'} is ${formatNumber(x, 6)}${unit}; remove "log" or start above zero.` }));
        bad = true;
      }
    }
    if (!bad && from === to) {
      ds.push(diag('P602', v.span, { name, detail: `the range is empty: it starts and ends at ${formatNumber(from, 6)}${unit}.` }));
      bad = true;
    }
    if (v.steps > MAX_STEPS) {
      ds.push(diag('P602', v.stepsSpan, { name, detail: `${v.steps} steps is too many; use at most ${MAX_STEPS}.` }));
      bad = true;
    }
    if (!bad) res.spec = { name, point, vary: v.name.name, from, to, steps: v.steps, log: v.log };
  }
  return out;
}

/** P602 diagnostics of every declared sweep (for the language server and `poise check`). */
export function sweepDiagnostics(a: SweepContext): Diagnostic[] {
  return declaredSweeps(a).flatMap((d) => d.diagnostics);
}

/** What can be swept at a point (for an editor's pick list): constants and the values the point fixes, with a suggested range. */
export function sweepCandidates(a: SweepContext, point: string): { name: string; kind: string; unit: string; value: number; from: number; to: number }[] {
  const block = a.pointBlock(point);
  if (!block) return [];
  let values: Float64Array;
  try {
    values = pointSetup(a.bound, a.lowered, block).values;
  } catch {
    return [];
  }
  const out: { name: string; kind: string; unit: string; value: number; from: number; to: number }[] = [];
  const fixedFirst = [...a.bound.inputs, ...a.bound.states, ...a.bound.vars, ...a.bound.outputs, ...a.bound.consts];
  for (const s of fixedFirst) {
    if (variedProblem(a, point, s.name)) continue;
    const slot = varSlot(a, s.name);
    if (!slot) continue;
    const v = declaredValue(slot, values[slot.id]);
    if (!Number.isFinite(v)) continue;
    const half = v !== 0 ? Math.abs(v) / 2 : 1;
    out.push({ name: s.name, kind: s.kind, unit: unitText(slot.unit.text), value: v, from: v - half, to: v + half });
  }
  return out;
}
