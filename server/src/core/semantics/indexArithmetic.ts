/**
 * Index arithmetic of indexed families: the value of a whole-number index expression (numbers, constants,
 * index names, + − * / ^), and reductions written as balanced trees so long sums never nest deeply.
 */
import type * as A from '../syntax/ast';
import type { Span } from '../text';

/** a ⊕ b ⊕ … as a balanced tree (depth log₂ n), so long sums never make deep trees. */
export function balanced(terms: A.Expr[], op: '+' | '*', span: Span): A.Expr {
  if (terms.length === 0) return { kind: 'number', value: op === '+' ? 0 : 1, text: op === '+' ? '0' : '1', span };
  let level = terms;
  while (level.length > 1) {
    const next: A.Expr[] = [];
    for (let k = 0; k + 1 < level.length; k += 2) next.push({ kind: 'binary', op, left: level[k], right: level[k + 1], span });
    if (level.length % 2) next.push(level[level.length - 1]);
    level = next;
  }
  return level[0];
}

/** Value of a whole-number expression, or the reason it has none. */
export function evalIndex(e: A.Expr, bind: ReadonlyMap<string, number>, consts: ReadonlyMap<string, number>, used: Set<string>, depth = 0, q?: (name: string) => string | undefined, refs?: { name: string; span: Span }[]): number | string {
  if (depth > 200) return 'the expression is nested too deeply';
  switch (e.kind) {
    case 'number':
      if (e.unit) return `${e.text} [${e.unit.text}] has a unit; an index is a plain number`;
      return e.value;
    case 'name': {
      if (e.index || e.primes || e.delta) return `${e.name} is not a constant`;
      const flat = bind.has(e.name) ? e.name : q ? q(e.name) ?? '' : e.name;
      const v = bind.get(e.name) ?? consts.get(flat);
      if (!bind.has(e.name) && v !== undefined) {
        used.add(flat);
        refs?.push({ name: flat, span: e.span }); // for references and rename of the constant
      }
      return v === undefined ? `${e.name} is not a whole-number constant or index` : v;
    }
    case 'unary': {
      const v = evalIndex(e.arg, bind, consts, used, depth + 1, q, refs);
      return typeof v === 'number' ? (e.op === '-' ? -v : v) : v;
    }
    case 'binary': {
      const a = evalIndex(e.left, bind, consts, used, depth + 1, q, refs);
      if (typeof a === 'string') return a;
      const b = evalIndex(e.right, bind, consts, used, depth + 1, q, refs);
      if (typeof b === 'string') return b;
      switch (e.op) {
        case '+': return a + b;
        case '-': return a - b;
        case '*': return a * b;
        case '/': return a / b;
        case '^': return a ** b;
      }
      return 'unknown operator';
    }
    default:
      return 'only numbers, constants, index names and + − * / ^ may appear here';
  }
}
