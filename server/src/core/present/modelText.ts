/**
 * The model text of a syntax tree: prints the elaborated (flat, scalar) model that an indexed model stands
 * for — `poise expand` and the editor's expanded view. The text is valid model text: reading it again gives
 * the same model (elements keep their fixed names, `h[3]`). Comments and generated linear blocks are left
 * out; each statement is printed on one line. Iterative, so long sums and deep expressions print safely.
 */
import type * as A from '../syntax/ast';
import { PREC_AND, PREC_COMPARE, PREC_OR } from '../syntax/lineParser';
import type { Analysis } from '../pipeline/analysis';

const PREC: Record<A.BinaryOp, number> = {
  '+': 1, '-': 1, '*': 2, '/': 2, '^': 4, or: PREC_OR, and: PREC_AND, '<': PREC_COMPARE, '<=': PREC_COMPARE, '>': PREC_COMPARE, '>=': PREC_COMPARE,
};

function unitText(u: A.UnitRef | undefined): string {
  return u ? ` [${u.text}]` : '';
}

/** Prints an expression with the parentheses its structure needs. */
export function exprText(root: A.Expr): string {
  // explicit stack of work items: either an expression to print (with the precedence of its context) or text
  type Item = { e: A.Expr; ctx: number; rightOfPow?: boolean } | string;
  const out: string[] = [];
  const stack: Item[] = [{ e: root, ctx: 0 }];
  while (stack.length) {
    const it = stack.pop()!;
    if (typeof it === 'string') {
      out.push(it);
      continue;
    }
    const { e, ctx } = it;
    switch (e.kind) {
      case 'number':
        out.push(e.value < 0 && ctx > 0 ? `(${e.text}${unitText(e.unit)})` : `${e.text}${unitText(e.unit)}`);
        break;
      case 'name':
        out.push(`${e.delta ? 'Δ' : ''}${e.name}${"'".repeat(e.primes)}`);
        break;
      case 'error':
        out.push('?');
        break;
      case 'unary': {
        const not = e.op === 'not';
        const wrap = not ? ctx > PREC_COMPARE : ctx > 1;
        if (wrap) stack.push(')');
        stack.push({ e: e.arg, ctx: not ? PREC_COMPARE : 3 });
        const op = not ? 'not ' : e.op;
        stack.push(wrap ? `(${op}` : op);
        break;
      }
      case 'binary': {
        const p = PREC[e.op];
        const wrap = p < ctx || (e.op === '^' && it.rightOfPow === false && ctx === 4);
        if (wrap) stack.push(')');
        // left-associative: the right operand of - and / (and of + and * for a faithful tree) binds tighter
        // conditions: and/or chain to the left, a comparison's operands are values (never conditions)
        const logic = p < 1;
        const rightCtx = e.op === '^' ? p : logic ? p + 0.01 : p + 1;
        const leftCtx = e.op === '^' ? p + 1 : p === PREC_COMPARE ? p + 0.01 : p;
        stack.push({ e: e.right, ctx: rightCtx, rightOfPow: e.op === '^' ? true : undefined });
        stack.push(e.op === '^' ? '^' : ` ${e.op} `);
        stack.push({ e: e.left, ctx: leftCtx, rightOfPow: e.op === '^' ? false : undefined });
        if (wrap) stack.push('(');
        break;
      }
      case 'call': {
        stack.push(')');
        for (let k = e.args.length - 1; k >= 0; k--) {
          stack.push({ e: e.args[k], ctx: 0 });
          if (k > 0) stack.push(', ');
        }
        stack.push(`${e.fn}(`);
        break;
      }
      case 'list': {
        stack.push(`}${unitText(e.unit)}`);
        for (let k = e.items.length - 1; k >= 0; k--) {
          stack.push({ e: e.items[k], ctx: 0 });
          if (k > 0) stack.push(', ');
        }
        stack.push('{');
        break;
      }
      case 'reduce': {
        stack.push(')');
        stack.push({ e: e.body, ctx: 0 });
        stack.push(': ');
        stack.push({ e: e.range.to, ctx: 1 });
        stack.push('..');
        stack.push({ e: e.range.from, ctx: 1 });
        stack.push(`${e.op}(each ${e.index.name} in `);
        break;
      }
    }
  }
  return out.join('');
}

/**
 * The expanded model of an analysis, as model text. A constant written only in sizes, ranges and indices
 * (`n` of `state h[1..n]`) has no use left once every family is written out: it is kept as a comment, so
 * that reading the text again gives no "declared but never used" warning the model itself does not have.
 */
export function expandedModelText(a: Analysis): string {
  const used = new Set(a.bound.references.filter((r) => r.where !== 'index').map((r) => r.symbol.name));
  const inIndices = new Set(a.bound.references.filter((r) => r.where === 'index').map((r) => r.symbol.name));
  const sizesOnly = new Set([...inIndices].filter((n) => !used.has(n)));
  return modelText(a.parsed.file, sizesOnly);
}

/** The model text of a (flat) model file; the constants in `asComments` are written as comments. */
export function modelText(file: A.ModelFile, asComments: ReadonlySet<string> = new Set()): string {
  const lines: string[] = [];
  let lastKind = '';
  for (const st of file.statements) {
    const blockish = st.kind === 'point' || st.kind === 'sweep';
    if ((blockish || (lastKind && lastKind !== st.kind && (st.kind === 'equation' || lastKind === 'equation'))) && lines.length) lines.push('');
    lastKind = st.kind;
    switch (st.kind) {
      case 'time':
        lines.push(`time${unitText(st.unit)}`);
        break;
      case 'const':
        if (asComments.has(st.name.name)) lines.push(`# const ${st.name.name} = ${exprText(st.value)}   (used only in sizes and indices, written out here)`);
        else lines.push(`const ${st.name.name} = ${exprText(st.value)}`);
        break;
      case 'input':
      case 'state':
      case 'var':
        lines.push(`${st.kind} ${st.names.map((n) => n.name).join(', ')}${unitText(st.unit)}`);
        break;
      case 'output':
        lines.push(`output ${st.name.name}${unitText(st.unit)} = ${exprText(st.value)}`);
        break;
      case 'equation':
        lines.push(`${exprText(st.lhs)} = ${exprText(st.rhs)}`);
        break;
      case 'point':
        lines.push(`point ${st.name.name}:`);
        for (const l of st.lines) lines.push(`  ${l.name.name}${"'".repeat(l.primes)} ${l.mode === 'fixed' ? '=' : '~'} ${exprText(l.value)}`);
        break;
      case 'sweep':
        lines.push(`sweep ${st.name.name} from ${st.point?.name ?? '?'}:`);
        if (st.vary) lines.push(`  vary ${st.vary.name.name} = ${exprText(st.vary.from)} to ${exprText(st.vary.to)} steps ${st.vary.steps}${st.vary.log ? ' log' : ''}`);
        break;
      case 'table':
        lines.push(`table ${st.name.name}${unitText(st.xUnit)} to${unitText(st.yUnit)} ${st.interpolation} ${st.outside}${st.file ? ` from "${st.file.text}"` : ':'}`);
        if (!st.file) for (const r of st.rows) lines.push(`  ${r.x}  ${r.y}`);
        break;
      case 'linear':
      case 'each':
        break; // generated blocks are not part of the model; each blocks are gone after elaboration
    }
  }
  return lines.join('\n') + '\n';
}
