/**
 * The line parser: the tokens of one logical line → expressions, names and index brackets. Statements and
 * blocks (parser.ts) drive it; a syntax error is thrown as a `SyntaxError_` carrying its diagnostic and
 * caught by the statement loop, which resumes at the next line.
 */
import type * as A from './ast';
import { diag, type Diagnostic } from '../diagnostics';
import { lex, type Token } from './lexer';
import type { Span } from '../text';

export interface Line {
  tokens: Token[];
  indent: number;
  span: Span;
}

/**
 * The deepest nesting of parentheses, calls, powers and signs an expression may have (docs/language.md).
 * Every later stage walks expressions recursively along their nesting (long flat chains such as a sum of
 * 10^5 terms are walked iteratively), so bounding the depth here keeps every stage off the stack limit.
 */
export const MAX_NESTING = 1000;

export class SyntaxError_ {
  constructor(readonly d: Diagnostic) {}
}

export function describe(t: Token | undefined): string {
  if (!t || t.kind === 'eof' || t.kind === 'newline') return 'end of line';
  if (t.kind === 'number') return `number ${t.text}`;
  if (t.kind === 'unit') return `unit [${t.text}]`;
  if (t.kind === 'string') return `text "${t.text}"`;
  if (t.kind === 'name') return `"${t.delta ? 'Δ' : ''}${t.text}"`;
  return `"${t.text}"`;
}

/** Parses the tokens of one logical line. */
export class LineParser {
  i = 0;
  /** Nesting of the expression being parsed (see MAX_NESTING). */
  depth = 0;
  constructor(readonly toks: Token[], readonly endOffset: number, readonly src: string) {}

  peek(k = 0): Token | undefined {
    return this.toks[this.i + k];
  }
  atEnd(): boolean {
    return this.i >= this.toks.length;
  }
  isOp(text: string, k = 0): boolean {
    const t = this.peek(k);
    return !!t && t.kind === 'op' && t.text === text;
  }
  isName(text?: string, k = 0): boolean {
    const t = this.peek(k);
    return !!t && t.kind === 'name' && !t.delta && (text === undefined || t.text === text);
  }
  here(): Span {
    const t = this.peek();
    if (t) return t.span;
    const e = this.endOffset;
    return { start: e, end: e };
  }
  fail(expected: string): never {
    const t = this.peek();
    throw new SyntaxError_(diag('P101', this.here(), { found: describe(t), expected }));
  }
  expectOp(text: string, expected = `"${text}"`): Token {
    if (!this.isOp(text)) this.fail(expected);
    return this.toks[this.i++];
  }
  expectName(expected = 'a name'): A.Ident {
    const t = this.peek();
    if (!t || t.kind !== 'name') this.fail(expected);
    this.i++;
    return { name: t.text, span: t.span };
  }
  expectEnd(expected = 'end of line'): void {
    if (!this.atEnd()) this.fail(expected);
  }

  /** Enters one level of nesting; too deep is a P114 at the token that opens the level. */
  enter(): void {
    if (++this.depth > MAX_NESTING) throw new SyntaxError_(diag('P115', this.here(), { limit: MAX_NESTING }));
  }

  /** The bracket right after the previous token (no space): an index or a range, not a unit. */
  adjacentBracket(): Token | undefined {
    const t = this.peek();
    const prev = this.toks[this.i - 1];
    return t && t.kind === 'unit' && prev && t.span.start === prev.span.end ? t : undefined;
  }

  /** Parses the inside of a bracket token as an index expression, or a range `a..b` when allowed. */
  bracketContent(t: Token, allowRange: boolean): { index?: A.Expr; range?: A.IndexRange } {
    const inner = this.src.slice(t.span.start + 1, this.src[t.span.end - 1] === ']' ? t.span.end - 1 : t.span.end);
    const shift = t.span.start + 1;
    const lexed = lex(inner);
    const toks = lexed.tokens.filter((k) => k.kind !== 'newline' && k.kind !== 'eof').map((k) => ({ ...k, span: { start: k.span.start + shift, end: k.span.end + shift } }));
    if (lexed.diagnostics.length) {
      const d = lexed.diagnostics[0];
      throw new SyntaxError_({ ...d, span: { start: d.span.start + shift, end: d.span.end + shift } });
    }
    const lp = new LineParser(toks, t.span.end - 1, this.src);
    lp.depth = this.depth; // an index inside an index still counts towards MAX_NESTING
    if (lp.atEnd()) throw new SyntaxError_(diag('P120', t.span));
    const first = lp.expr();
    if (lp.isOp('..')) {
      if (!allowRange) throw new SyntaxError_(diag('P121', lp.peek()!.span));
      lp.i++;
      const to = lp.expr();
      lp.expectEnd('"]" after the range');
      return { range: { from: first, to, span: t.span } };
    }
    lp.expectEnd(allowRange ? '".." and the last index, or "]"' : '"]" after the index');
    return { index: first };
  }

  /** `from..to` written in the line itself (each headers, reductions). */
  rangeHere(): A.IndexRange {
    const from = this.expr();
    this.expectOp('..', '".." between the first and the last index, e.g. 1..n');
    const to = this.expr();
    return { from, to, span: { start: from.span.start, end: to.span.end } };
  }

  /** A declared name with an optional family range or element index right after it. */
  declName(expected?: string): A.Ident {
    const id = this.expectName(expected);
    const b = this.adjacentBracket();
    if (b && (/\.\./.test(b.text) || /^\s*\d+\s*$/.test(b.text))) {
      this.i++;
      const c = this.bracketContent(b, true);
      if (c.range) id.range = c.range;
      else {
        id.index = c.index;
        const m = this.member();
        if (m) id.member = m;
      }
    }
    return id;
  }

  /** `.level` (or `.h[2]`, `.h[2].x`) right after an element's index: a member of an element of a family of instances. */
  member(): A.Member | undefined {
    const dot = this.peek();
    const prev = this.toks[this.i - 1];
    const t = this.peek(1);
    if (!dot || dot.kind !== 'op' || dot.text !== '.' || !prev || dot.span.start !== prev.span.end) return undefined;
    if (!t || t.kind !== 'name' || t.delta || t.span.start !== dot.span.end) return undefined;
    this.i += 2;
    const m: A.Member = { name: t.text, span: t.span };
    const b = this.adjacentBracket();
    if (b) {
      this.i++;
      m.index = this.bracketContent(b, false).index;
      m.span = { start: t.span.start, end: b.span.end };
      const next = this.member();
      if (next) m.member = next;
    }
    return m;
  }

  // ---- expressions (Pratt) ----
  expr(minPrec = 0): A.Expr {
    this.enter();
    try {
      return this.exprAt(minPrec);
    } finally {
      this.depth--;
    }
  }

  private exprAt(minPrec: number): A.Expr {
    let left = this.unary();
    for (;;) {
      const t = this.peek();
      if (!t) break;
      const op = t.text;
      let prec: number;
      let rightAssoc = false;
      // `and` and `or` are operators only here, between two operands (a name elsewhere)
      if (t.kind === 'name') {
        if (t.delta || (op !== 'and' && op !== 'or')) break;
        prec = op === 'or' ? PREC_OR : PREC_AND;
      } else if (t.kind !== 'op') break;
      else if (op === '+' || op === '-') prec = 1;
      else if (op === '*' || op === '/') prec = 2;
      else if (op === '^') {
        prec = 4;
        rightAssoc = true;
      } else if (op === '<' || op === '<=' || op === '>' || op === '>=') prec = PREC_COMPARE;
      else break;
      if (prec < minPrec) break;
      this.i++;
      // conditions (prec < 1): the right operand binds just tighter, so `a and b < c` compares before it joins
      const right = op === '^' ? this.powerOperand() : this.expr(rightAssoc ? prec : prec < 1 ? prec + 0.01 : prec + 1);
      left = { kind: 'binary', op: op as A.BinaryOp, left, right, span: { start: left.span.start, end: right.span.end } };
    }
    return left;
  }

  /** Operand of ^: allows a leading sign (x^-1) and binds to the right. */
  powerOperand(): A.Expr {
    this.enter();
    try {
      return this.powerOperandAt();
    } finally {
      this.depth--;
    }
  }

  private powerOperandAt(): A.Expr {
    const t = this.peek();
    if (t && t.kind === 'op' && (t.text === '-' || t.text === '+')) {
      this.i++;
      const arg = this.powerOperand();
      return signed(t.text as '-' | '+', arg, t.span.start);
    }
    const base = this.postfix();
    if (this.isOp('^')) {
      this.i++;
      const right = this.powerOperand();
      return { kind: 'binary', op: '^', left: base, right, span: { start: base.span.start, end: right.span.end } };
    }
    return base;
  }

  unary(): A.Expr {
    const t = this.peek();
    // `not` before an operand negates a condition; `not` alone (or before an operator) is a name
    if (t && t.kind === 'name' && !t.delta && t.text === 'not' && startsOperand(this.peek(1))) {
      this.i++;
      const arg = this.expr(PREC_COMPARE);
      return { kind: 'unary', op: 'not', arg, span: { start: t.span.start, end: arg.span.end } };
    }
    if (t && t.kind === 'op' && (t.text === '-' || t.text === '+')) {
      this.i++;
      // -x^2 is -(x^2); -a*b is (-a)*b (same value)
      const arg = this.expr(3);
      return signed(t.text as '-' | '+', arg, t.span.start);
    }
    return this.postfix();
  }

  postfix(): A.Expr {
    const e = this.primary();
    if (this.isOp("'")) {
      if (e.kind !== 'name' || e.primes > 0) {
        const t = this.peek()!;
        throw new SyntaxError_(diag('P109', t.span));
      }
    }
    return e;
  }

  primary(): A.Expr {
    const t = this.peek();
    if (!t) this.fail('a value, a name or "("');
    if (t.kind === 'number') {
      this.i++;
      const n: A.NumberExpr = { kind: 'number', value: t.value ?? Number(t.text), text: t.text, span: t.span };
      const u = this.peek();
      if (u && u.kind === 'unit') {
        this.i++;
        n.unit = { text: u.text, span: u.span };
        n.span = { start: t.span.start, end: u.span.end };
      }
      return n;
    }
    if (t.kind === 'name') {
      this.i++;
      if ((t.text === 'sum' || t.text === 'product') && !t.delta && this.isOp('(') && this.isName('each', 1)) {
        const open = this.toks[this.i];
        this.i += 2;
        const index = this.expectName('the index name, e.g. sum(each i in 1..n: q[i])');
        if (!this.isName('in')) this.fail('"in" and the index range, e.g. each i in 1..n');
        this.i++;
        const range = this.rangeHere();
        this.expectOp(':', '":" before the expression to add up');
        const body = this.expr();
        if (!this.isOp(')')) {
          if (this.atEnd()) throw new SyntaxError_(diag('P102', open.span));
          this.fail('")"');
        }
        const close = this.toks[this.i++];
        return { kind: 'reduce', op: t.text, opSpan: t.span, index, range, body, span: { start: t.span.start, end: close.span.end } };
      }
      if (this.isOp('(') && !t.delta) {
        const open = this.toks[this.i++];
        const args: A.Expr[] = [];
        if (!this.isOp(')')) {
          for (;;) {
            args.push(this.expr());
            if (this.isOp(',')) {
              this.i++;
              continue;
            }
            break;
          }
        }
        if (!this.isOp(')')) {
          if (this.atEnd()) throw new SyntaxError_(diag('P102', open.span)); // point at the unclosed "(", as for a group
          this.fail('"," or ")"');
        }
        const close = this.toks[this.i++];
        return { kind: 'call', fn: t.text, fnSpan: t.span, args, span: { start: t.span.start, end: close.span.end } };
      }
      let index: A.Expr | undefined;
      let member: A.Member | undefined;
      let end = t.span.end;
      const b = this.adjacentBracket();
      if (b) {
        this.i++;
        index = this.bracketContent(b, false).index;
        end = b.span.end;
        member = this.member();
        if (member) end = lastMember(member).span.end;
      }
      const nameEnd = end;
      let primes = 0;
      while (this.isOp("'")) {
        const p = this.toks[this.i++];
        if (p.span.start !== end) break; // primes must touch the name
        primes++;
        end = p.span.end;
      }
      // a plain name (no Δ, index or primes) shares its token's span: one object for both (spans are never
      // changed in place, except by shiftSpans, which moves each object once)
      const ts = t.span;
      const nameSpan = t.delta ? { start: ts.start + 1, end: nameEnd } : nameEnd === ts.end ? ts : { start: ts.start, end: nameEnd };
      const ne: A.NameExpr = { kind: 'name', name: t.text, primes, delta: !!t.delta, span: end === ts.end ? ts : { start: ts.start, end }, nameSpan };
      if (index) ne.index = index;
      if (member) ne.member = member;
      return ne;
    }
    if (t.kind === 'op' && t.text === '{') {
      this.i++;
      const items: A.Expr[] = [];
      if (!this.isOp('}')) {
        for (;;) {
          items.push(this.expr());
          if (this.isOp(',')) {
            this.i++;
            continue;
          }
          break;
        }
      }
      if (!this.isOp('}')) this.fail('"," or "}"');
      const close = this.toks[this.i++];
      const list: A.ListExpr = { kind: 'list', items, span: { start: t.span.start, end: close.span.end } };
      const u = this.peek();
      if (u && u.kind === 'unit') {
        this.i++;
        list.unit = { text: u.text, span: u.span };
        list.span = { start: t.span.start, end: u.span.end };
      }
      return list;
    }
    if (t.kind === 'op' && t.text === '(') {
      this.i++;
      const inner = this.expr();
      if (!this.isOp(')')) {
        if (this.atEnd()) throw new SyntaxError_(diag('P102', { start: t.span.start, end: t.span.end }));
        this.fail('")"');
      }
      const close = this.toks[this.i++];
      // keep the parenthesised span for ranges
      return { ...inner, span: { start: t.span.start, end: close.span.end } } as A.Expr;
    }
    if (t.kind === 'unit') {
      throw new SyntaxError_(diag('P101', t.span, { found: describe(t), expected: 'a number before the unit (e.g. 1 [' + t.text + '])' }));
    }
    this.fail('a value, a name or "("');
  }
}

/** Binding strength of `or`, `and` and the comparisons: below + and − (1), so `a + b < c` compares sums. */
export const PREC_OR = 0.25;
export const PREC_AND = 0.5;
export const PREC_COMPARE = 0.75;

function startsOperand(t: Token | undefined): boolean {
  if (!t) return false;
  // not a sign: with a name `not`, `not - 1` stays a difference (write `not (-x > 1)`)
  return t.kind === 'number' || t.kind === 'name' || (t.kind === 'op' && t.text === '(');
}

/**
 * A sign before an operand. A sign written directly before a quantity (`-5 [degC]`, `-(5 [degC])`) belongs
 * to the number: it is the value in that unit, so an offset unit converts the signed value
 * (−5 °C = 268.15 K, SI Brochure 9th ed. 2.3.1), never the negated conversion (−278.15 K). Folding it here,
 * once, keeps every later stage (constants, point values, lowering, hovers) right without special cases.
 */
export function signed(op: '-' | '+', arg: A.Expr, start: number): A.Expr {
  const span = { start, end: arg.span.end };
  if (arg.kind === 'number' && arg.unit) {
    const neg = op === '-';
    const text = neg ? (arg.text.startsWith('-') ? arg.text.slice(1) : '-' + arg.text) : arg.text;
    return { ...arg, value: neg ? -arg.value : arg.value, text, span };
  }
  return { kind: 'unary', op, arg, span };
}

/** The innermost member of a chain (`.x` in `cell[3].h[2].x`). */
export function lastMember(m: A.Member): A.Member {
  let x = m;
  while (x.member) x = x.member;
  return x;
}
