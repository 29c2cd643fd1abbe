/**
 * Checks of a solved point, equation by equation: domain (a root of a negative, a logarithm of zero…) and
 * differentiability (a kink, a switch, a clamp limit or a table breakpoint exactly at the point, with the
 * slopes on each side), each pointing at the subexpression; and the switches the solver crosses whole.
 */
import { diag, type Diagnostic } from '../diagnostics';
import * as E from '../algebra/expr';
import type { LoweredModel } from '../model/model';
import type { Span } from '../text';
import { formatShort } from '../numbers';
import { switchSlopes, tableFinding } from './kinks';

/** Domain and differentiability checks of every equation at the point, pointing at the subexpression. */
export function pointChecks(lm: LoweredModel, values: Float64Array, point: string, pointSpan: Span): Diagnostic[] {
  const out: Diagnostic[] = [];
  const seen = new Set<string>();
  const rel = [{ span: pointSpan, message: `point ${point}` }];
  const report = (code: 'P504' | 'P505' | 'P520' | 'P521', src: Span | undefined, detail: string, fallback: Span, args: Record<string, string> = {}) => {
    const sp = src ?? fallback;
    const k = `${code}:${sp.start}:${sp.end}`;
    if (seen.has(k)) return;
    seen.add(k);
    out.push(diag(code, sp, { point, detail, ...args }, { related: rel }));
  };
  const infinite = { uses: 'has an infinite slope there' };
  const fmt = (v: number) => formatShort(v, true);
  for (const eq of lm.equations) {
    const walk = (n: E.Node): void => {
      if (n.t === 'num' || n.t === 'sym') return;
      if (n.t === 'pow') {
        walk(n.base);
        walk(n.exp);
        const b = E.evaluate(n.base, values);
        const ex = E.evaluate(n.exp, values);
        if (b < 0 && !Number.isInteger(ex)) report('P504', n.src, `negative base ${fmt(b)} raised to the non-integer power ${fmt(ex)}`, eq.span);
        else if (b === 0 && ex < 0) report('P504', n.src, 'division by zero', eq.span);
        else if (b === 0 && ex > 0 && ex < 1) report('P505', n.src, `power ${fmt(ex)} of zero`, eq.span, infinite);
        return;
      }
      for (const a of n.args) walk(a);
      if (n.t !== 'fn') return;
      const a = E.evaluate(n.args[0], values);
      const b = n.args.length > 1 ? E.evaluate(n.args[1], values) : NaN;
      switch (n.fn) {
        case 'sqrt':
          if (a < 0) report('P504', n.src, `square root of a negative value (${fmt(a)})`, eq.span);
          else if (a === 0) report('P505', n.src, 'square root at zero (infinite slope)', eq.span, infinite);
          break;
        case 'log':
        case 'log10':
          if (a <= 0) report('P504', n.src, `logarithm of ${fmt(a)} (must be > 0)`, eq.span);
          break;
        case 'asin':
        case 'acos':
          if (Math.abs(a) > 1) report('P504', n.src, `${n.fn} of ${fmt(a)} (must be within -1…1)`, eq.span);
          break;
        case 'abs':
        case 'sign':
          if (a === 0 && hasTwoSlopes(eq.residual, n, n.fn === 'abs' ? [n.args[0], E.neg(n.args[0])] : [E.ONE, E.num(-1)], values)) {
            report('P505', n.src, `${n.fn} at zero${n.fn === 'abs' ? ' (slope −1 below, +1 above)' : ' (a jump from −1 to 1)'}`, eq.span, { uses: 'takes slope 0 there' });
          }
          break;
        case 'min':
        case 'max':
        case 'pick': {
          if (a !== b) break;
          // min(a, b) is pick(a, b, a, b), max(a, b) is pick(b, a, a, b): the first branch holds where the first argument is smaller
          const [x, y, p, q] = n.fn === 'pick' ? n.args : n.fn === 'min' ? [n.args[0], n.args[1], n.args[0], n.args[1]] : [n.args[1], n.args[0], n.args[0], n.args[1]];
          if (!hasTwoSlopes(eq.residual, n, [p, q], values)) break;
          const slopes = switchSlopes(lm, x, y, p, q, values);
          const what = n.fn === 'pick' ? 'a condition of choose is at its threshold' : `${n.fn} with both arguments equal (${fmt(a)})`;
          report('P505', n.src, slopes ? `${what}: ${slopes}` : what, eq.span, {
            uses: n.fn === 'pick' ? 'takes the case that holds at the threshold (≤ and ≥ hold there, < and > do not)' : 'takes the slope of the first argument there',
          });
          break;
        }
        case 'table': {
          const f = tableFinding(n, values);
          if (!f) break;
          if (f.kind === 'breakpoint') report('P505', n.src, f.args.detail, eq.span, { uses: f.args.uses });
          else report(n.tab!.source.outside === 'strict' ? 'P521' : 'P520', n.src, '', eq.span, f.args);
          break;
        }
      }
    };
    walk(eq.residual);
    if (eq.residual.t === 'num' && Number.isNaN(eq.residual.v)) continue;
    // division by zero anywhere shows up as a non-finite value
    const v = E.evaluate(eq.residual, values);
    if (!Number.isFinite(v) && !out.some((d) => d.span.start >= eq.span.start && d.span.end <= eq.span.end)) {
      report('P504', eq.span, 'the equation evaluates to a non-finite value (division by zero?)', eq.span);
    }
  }
  return out;
}

export function domainDiagnostic(lm: LoweredModel, values: Float64Array, point: string, rows: number[], pointSpan: Span, when: string): Diagnostic {
  const checks = pointChecks(lm, values, point, pointSpan).filter((d) => d.code === 'P504');
  if (checks.length) {
    const d = checks[0];
    return diag('P503', pointSpan, { point, detail: `${when} ${d.message.replace(/^Domain error at point "[^"]*": /, '').replace(/\.$/, '')}; give guesses ("~") inside the model's domain.` }, { related: [{ span: d.span, message: 'here' }] });
  }
  return diag('P503', pointSpan, { point, detail: `${when} the equations evaluate to non-finite values${rows.length ? '' : ''}; give guesses ("~") inside the model's domain.` });
}

/** The pick nodes (switches) of the residuals, each once. */
export function switchNodes(roots: E.Node[]): E.Fn[] {
  const out: E.Fn[] = [];
  const seen = new Set<E.Node>();
  const stack = [...roots];
  while (stack.length) {
    const n = stack.pop()!;
    // leaves are never switches and have no arguments: only inner nodes are remembered
    if (n.t === 'num' || n.t === 'sym' || seen.has(n)) continue;
    seen.add(n);
    if (n.t === 'fn' && (n.fn === 'pick' || n.fn === 'min' || n.fn === 'max')) {
      // min(a, b) and max(a, b) switch where a = b, as pick(a, b, …) does
      out.push(n.fn === 'pick' ? n : { t: 'fn', fn: 'pick', args: [n.args[0], n.args[1], E.ZERO, E.ZERO] });
    }
    if (n.t === 'pow') stack.push(n.base, n.exp);
    else for (const a of n.args) stack.push(a);
  }
  return out;
}

/** root with the node `target` replaced by `by` (structural rebuild through the folding constructors). */
function replaceNode(root: E.Node, target: E.Node, by: E.Node): E.Node {
  if (root === target) return by;
  switch (root.t) {
    case 'num':
    case 'sym':
      return root;
    case 'add': return E.add(root.args.map((a) => replaceNode(a, target, by)), root.src);
    case 'mul': return E.mul(root.args.map((a) => replaceNode(a, target, by)), root.src);
    case 'pow': return E.pow(replaceNode(root.base, target, by), replaceNode(root.exp, target, by), root.src);
    case 'fn': return E.withArgs(root, root.args.map((a) => replaceNode(a, target, by)));
  }
}

/**
 * Whether the equation really has two slopes (or a jump) at a kink: the residual and its gradient with the
 * kinked function replaced by each of its branches, compared at the point. `w*abs(w)` at w = 0 has one slope (0)
 * on both sides, so the linear model is exact there and no warning is due.
 */
function hasTwoSlopes(residual: E.Node, kink: E.Node, branches: [E.Node, E.Node], values: Float64Array): boolean {
  const [r1, r2] = branches.map((b) => replaceNode(residual, kink, b));
  const close = (x: number, y: number): boolean => Math.abs(x - y) <= 1e-12 * (Math.abs(x) + Math.abs(y)) + 1e-300;
  // a jump (sign) shows in the values, a kink (abs, min, max) in the slopes
  if (!close(E.evaluate(r1, values), E.evaluate(r2, values))) return true;
  for (const id of E.slots(residual)) {
    const g1 = E.evaluate(E.derivative(r1, id), values);
    const g2 = E.evaluate(E.derivative(r2, id), values);
    if (!close(g1, g2)) return true;
  }
  return false;
}
