/**
 * Walking expressions without deep recursion. The parser bounds how deeply an expression nests
 * (MAX_NESTING), but a chain of left-associative operators (a sum of 10^5 terms) is a left-deep tree as
 * long as the chain. Walkers therefore unwind such chains in a loop (`foldChain`) and recurse only into
 * the right operands, arguments and signed operands, whose depth the parser bounds; `forEachExpr` and
 * `someExpr` visit every sub-expression with an explicit stack.
 */
import type * as A from './ast';

/** The innermost left operand of a chain of binary operators and the binary nodes from the innermost out. */
export function leftSpine(e: A.BinaryExpr): { first: A.Expr; nodes: A.BinaryExpr[] } {
  const nodes: A.BinaryExpr[] = [];
  let x: A.Expr = e;
  while (x.kind === 'binary') {
    nodes.push(x);
    x = x.left;
  }
  nodes.reverse();
  return { first: x, nodes };
}

/**
 * The value of a binary chain computed left to right, as the recursive walk `combine(e, rec(e.left),
 * rec(e.right))` would, but with a loop along the left operands.
 */
export function foldChain<T>(e: A.BinaryExpr, rec: (x: A.Expr) => T, combine: (node: A.BinaryExpr, left: T, right: T) => T): T {
  const { first, nodes } = leftSpine(e);
  let acc = rec(first);
  for (const n of nodes) acc = combine(n, acc, rec(n.right));
  return acc;
}

/** The direct sub-expressions, left to right. */
export function children(e: A.Expr): A.Expr[] {
  switch (e.kind) {
    case 'unary': return [e.arg];
    case 'binary': return [e.left, e.right];
    case 'call': return e.args;
    case 'list': return e.items;
    case 'reduce': return [e.range.from, e.range.to, e.body];
    case 'name': return e.index ? [e.index] : [];
    default: return [];
  }
}

/** Visits every sub-expression in source order (pre-order) with an explicit stack; `visit` returning false skips the children. */
export function forEachExpr(e: A.Expr, visit: (x: A.Expr) => boolean | void): void {
  const stack: A.Expr[] = [e];
  while (stack.length) {
    const x = stack.pop()!;
    if (visit(x) === false) continue;
    const c = children(x);
    for (let i = c.length - 1; i >= 0; i--) stack.push(c[i]);
  }
}

/** Whether some sub-expression satisfies `pred` (explicit stack, stops at the first). */
export function someExpr(e: A.Expr, pred: (x: A.Expr) => boolean): boolean {
  let found = false;
  forEachExpr(e, (x) => {
    if (found) return false;
    if (pred(x)) {
      found = true;
      return false;
    }
    return true;
  });
  return found;
}

/** The first sub-expression in source order for which `f` gives a value. */
export function findInExpr<T>(e: A.Expr, f: (x: A.Expr) => T | undefined): T | undefined {
  let out: T | undefined;
  forEachExpr(e, (x) => {
    if (out !== undefined) return false;
    out = f(x);
    return out === undefined;
  });
  return out;
}
