/**
 * Dimensions of expressions from the declared units (for hovers), and the unit an undeclared name would
 * need where it is used (for the "declare it" quick fix): worked out from the other side of the equation
 * down to the name, e.g. in `outflow = k*sqrt(level) + leak` the name `leak` needs the unit of `outflow`.
 * Pure.
 */
import type { Analysis } from '../pipeline/analysis';
import type * as A from '../syntax/ast';
import type { Span } from '../text';
import { children, foldChain } from '../syntax/walk';
import { DIMENSIONLESS, dimsDiv, dimsEqual, dimsMul, dimsPow, formatDims, isDimensionless, parseUnit, type Dims } from '../semantics/units';

/** Dimension of an expression from the declared units (null when unknown, e.g. an undeclared name). */
export function dimsOf(a: Analysis, e: A.Expr): Dims | null {
  const m = a.bound;
  switch (e.kind) {
    case 'number': {
      if (!e.unit) return DIMENSIONLESS;
      const u = parseUnit(e.unit.text);
      return typeof u === 'string' ? null : u.dims;
    }
    case 'name': {
      const s = m.symbols.get(e.name);
      if (!s) return e.name === 'pi' ? DIMENSIONLESS : null;
      if (s.kind === 'const') return a.units.constDims.get(s) ?? null;
      const u = a.units.units.get(s);
      return u ? dimsDiv(u.dims, dimsPow(a.units.time.dims, e.primes)) : null;
    }
    case 'unary': return dimsOf(a, e.arg);
    case 'binary': return foldChain(e, (x) => dimsOf(a, x), (e, l, r) => {
      switch (e.op) {
        case '+': case '-': return l ?? r;
        case '*': return l && r ? dimsMul(l, r) : null;
        case '/': return l && r ? dimsDiv(l, r) : null;
        case '^': {
          if (!l) return null;
          if (isDimensionless(l)) return DIMENSIONLESS;
          const p = constantExponent(e.right);
          return p === undefined ? null : dimsPow(l, p);
        }
      }
      return null;
    });
    case 'call': {
      const x = e.args[0] ? dimsOf(a, e.args[0]) : null;
      switch (e.fn) {
        case 'sqrt': return x ? dimsPow(x, 0.5) : null;
        case 'abs': case 'min': case 'max': case 'hypot': return x ?? (e.args[1] ? dimsOf(a, e.args[1]) : null);
        case 'clamp': return x ?? (e.args[1] ? dimsOf(a, e.args[1]) : null);
        case 'choose': return e.args[1] ? dimsOf(a, e.args[1]) : null;
        default: return a.bound.tables.has(e.fn) ? null : DIMENSIONLESS;
      }
    }
    default: return null;
  }
}

function constantExponent(e: A.Expr): number | undefined {
  if (e.kind === 'number' && !e.unit) return e.value;
  if (e.kind === 'unary' && e.arg.kind === 'number' && !e.arg.unit) return e.op === '-' ? -e.arg.value : e.arg.value;
  return undefined;
}

/** Path from `root` down to the name node whose name span is `span` (root first), or undefined. */
function pathTo(root: A.Expr, span: Span): A.Expr[] | undefined {
  // a loop, not recursion: the path into a long sum is as long as the sum
  const path: A.Expr[] = [];
  let x: A.Expr | undefined = root;
  while (x) {
    if (x.kind === 'name' && x.nameSpan.start === span.start && x.nameSpan.end === span.end) {
      path.push(x);
      return path;
    }
    if (x.span.end < span.start || x.span.start > span.end) return undefined;
    path.push(x);
    x = children(x).find((k) => k.span.start <= span.start && span.end <= k.span.end);
  }
  return undefined;
}

/** The dimension the name at `span` must have for its statement to balance (null when it cannot be told). */
export function requiredDims(a: Analysis, span: Span): Dims | null {
  for (const st of a.parsed.file.statements) {
    if (st.span.end < span.start || st.span.start > span.end) continue;
    let sides: [A.Expr, Dims | null][] = [];
    if (st.kind === 'equation') sides = [[st.lhs, dimsOf(a, st.rhs)], [st.rhs, dimsOf(a, st.lhs)]];
    else if (st.kind === 'output') {
      const s = a.bound.symbols.get(st.name.name);
      const u = s ? a.units.units.get(s) : undefined;
      sides = [[st.value, u ? u.dims : null]];
    }
    for (const [root, target] of sides) {
      const path = pathTo(root, span);
      if (!path) continue;
      let need = target;
      for (let i = 0; i + 1 < path.length && need; i++) {
        const parent = path[i];
        const child = path[i + 1];
        if (parent.kind === 'unary') continue;
        if (parent.kind === 'binary') {
          const other = parent.left === child ? parent.right : parent.left;
          const od = parent.op === '+' || parent.op === '-' || parent.op === '^' ? null : dimsOf(a, other); // only where it matters (a path down a long sum stays linear)
          switch (parent.op) {
            case '+': case '-': break;
            case '*': need = od ? dimsDiv(need, od) : null; break;
            case '/': need = !od ? null : parent.left === child ? dimsMul(need, od) : dimsDiv(od, need); break;
            case '^': {
              const p = parent.left === child ? constantExponent(parent.right) : undefined;
              need = p ? dimsPow(need, 1 / p) : parent.right === child ? DIMENSIONLESS : null;
              break;
            }
          }
        } else if (parent.kind === 'call') {
          switch (parent.fn) {
            case 'sqrt': need = dimsPow(need, 2); break;
            case 'abs': case 'min': case 'max': case 'hypot': break;
            case 'atan2': need = dimsOf(a, parent.args[0] === child ? parent.args[1] : parent.args[0]); break;
            default: need = DIMENSIONLESS;
          }
        }
      }
      return need;
    }
  }
  return null;
}

/**
 * A unit text for a dimension: the declared unit of a name in the same statement, else of any declared
 * name, with that dimension; else SI base units. '' for dimensionless; undefined when unknown.
 */
export function unitTextFor(a: Analysis, d: Dims | null, near?: Span): string | undefined {
  if (!d) return undefined;
  if (isDimensionless(d)) return '';
  const declared = [...a.bound.inputs, ...a.bound.states, ...a.bound.vars, ...a.bound.outputs];
  const nearby = near ? a.bound.references.filter((r) => Math.abs(r.span.start - near.start) < 400).map((r) => r.symbol) : [];
  for (const s of [...nearby, ...declared]) {
    const u = a.units.units.get(s);
    if (s.kind !== 'const' && s.unit && u && dimsEqual(u.dims, d)) return s.unit.text;
  }
  return formatDims(d);
}
