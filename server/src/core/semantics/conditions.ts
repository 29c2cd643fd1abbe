/**
 * Conditions and values kept apart (docs/language.md, "Piecewise laws"): a comparison, `and`, `or` and
 * `not` make a condition, which only selects a case of choose(…); a value is everything else. A condition
 * where a value is expected is P320, a value where a condition is expected P321, each at the exact range.
 */
import type * as A from '../syntax/ast';
import { diag, type Diagnostic } from '../diagnostics';

const COMPARE = new Set(['<', '<=', '>', '>=']);

/** Whether an expression is a condition by its outermost operator. */
export function isCondition(e: A.Expr): boolean {
  return (e.kind === 'binary' && (COMPARE.has(e.op) || e.op === 'and' || e.op === 'or')) || (e.kind === 'unary' && e.op === 'not');
}

function conditionWord(e: A.Expr): string {
  if (e.kind === 'unary') return '"not …"';
  if (e.kind === 'binary' && (e.op === 'and' || e.op === 'or')) return `"… ${e.op} …"`;
  return `the comparison "${e.kind === 'binary' ? e.op : ''}"`;
}

/** The diagnostics of one expression where a value (or, with `wantCondition`, a condition) is expected. */
export function checkConditions(root: A.Expr, wantCondition = false, out: Diagnostic[] = []): Diagnostic[] {
  // explicit stack (of expressions, and whether each is to be a condition): long sums are left-deep chains
  const stack: A.Expr[] = [root];
  const conds: boolean[] = [wantCondition];
  const push = (x: A.Expr, c: boolean): void => {
    stack.push(x);
    conds.push(c);
  };
  while (stack.length) {
    const e = stack.pop()!;
    const cond = conds.pop()!;
    if (cond && !isCondition(e)) {
      if (e.kind !== 'error') out.push(diag('P321', e.span));
      continue;
    }
    if (!cond && isCondition(e)) {
      out.push(diag('P320', e.span, { what: conditionWord(e) }));
      continue;
    }
    switch (e.kind) {
      case 'unary':
        push(e.arg, e.op === 'not');
        break;
      case 'binary':
        if (e.op === 'and' || e.op === 'or' || COMPARE.has(e.op)) {
          const logic = e.op === 'and' || e.op === 'or';
          push(e.left, logic);
          push(e.right, logic);
        } else {
          // down the chain of arithmetic to its first operand (which may be a condition: an error)
          let x: A.Expr = e;
          while (x.kind === 'binary' && !isCondition(x)) {
            push(x.right, false);
            x = x.left;
          }
          push(x, false);
        }
        break;
      case 'call':
        e.args.forEach((a, k) => push(a, e.fn === 'choose' && k % 2 === 0 && k < e.args.length - 1));
        break;
      case 'list':
        for (const a of e.items) push(a, false);
        break;
      case 'reduce':
        push(e.body, false);
        break;
      case 'name':
        if (e.index) push(e.index, false);
        break;
    }
  }
  return out;
}

/** Every expression of a file checked: equations, outputs, constants, point values, sweep bounds. */
export function conditionDiagnostics(file: A.ModelFile): Diagnostic[] {
  const out: Diagnostic[] = [];
  const walk = (sts: A.Statement[]): void => {
    for (const st of sts) {
      switch (st.kind) {
        case 'const': checkConditions(st.value, false, out); break;
        case 'output': checkConditions(st.value, false, out); break;
        case 'equation': checkConditions(st.lhs, false, out); checkConditions(st.rhs, false, out); break;
        case 'point': for (const l of st.lines) checkConditions(l.value, false, out); break;
        case 'each': walk(st.body); break;
      }
    }
  };
  walk(file.statements);
  return out;
}
