/**
 * Parser: tokens → syntax tree. Error-tolerant: never throws, reports each error with its exact span
 * and resumes at the next logical line, so the rest of the file is still analysed.
 */
import type * as A from './ast';
import { diag, type Diagnostic } from '../diagnostics';
import { lex, type Token } from './lexer';
import type { Span } from '../text';

export interface ParseResult {
  file: A.ModelFile;
  diagnostics: Diagnostic[];
}

export const KEYWORDS = new Set([
  'time', 'const', 'input', 'state', 'var', 'output', 'point', 'linear', 'digest', 'at', 'sweep', 'from', 'vary', 'to', 'steps', 'log', 'each', 'in',
]);
/** Words that start a statement; they cannot be used as names. `log` stays a function name. */
export const RESERVED = new Set(['time', 'const', 'input', 'state', 'var', 'output', 'point', 'linear', 'sweep', 'each']);

interface Line {
  tokens: Token[];
  indent: number;
  span: Span;
}

class SyntaxError_ {
  constructor(readonly d: Diagnostic) {}
}

function describe(t: Token | undefined): string {
  if (!t || t.kind === 'eof' || t.kind === 'newline') return 'end of line';
  if (t.kind === 'number') return `number ${t.text}`;
  if (t.kind === 'unit') return `unit [${t.text}]`;
  if (t.kind === 'name') return `"${t.delta ? 'Δ' : ''}${t.text}"`;
  return `"${t.text}"`;
}

function splitLines(tokens: Token[]): Line[] {
  const lines: Line[] = [];
  let cur: Token[] = [];
  for (const t of tokens) {
    if (t.kind === 'newline' || t.kind === 'eof') {
      if (cur.length) {
        lines.push({ tokens: cur, indent: cur[0].indent ?? 0, span: { start: cur[0].span.start, end: cur[cur.length - 1].span.end } });
      }
      cur = [];
    } else cur.push(t);
  }
  return lines;
}

/** Parses the tokens of one logical line. */
class LineParser {
  i = 0;
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
      else id.index = c.index;
    }
    return id;
  }

  // ---- expressions (Pratt) ----
  expr(minPrec = 0): A.Expr {
    let left = this.unary();
    for (;;) {
      const t = this.peek();
      if (!t || t.kind !== 'op') break;
      const op = t.text;
      let prec: number;
      let rightAssoc = false;
      if (op === '+' || op === '-') prec = 1;
      else if (op === '*' || op === '/') prec = 2;
      else if (op === '^') {
        prec = 4;
        rightAssoc = true;
      } else break;
      if (prec < minPrec) break;
      this.i++;
      const right = op === '^' ? this.powerOperand() : this.expr(rightAssoc ? prec : prec + 1);
      left = { kind: 'binary', op: op as A.BinaryOp, left, right, span: { start: left.span.start, end: right.span.end } };
    }
    return left;
  }

  /** Operand of ^: allows a leading sign (x^-1) and binds to the right. */
  powerOperand(): A.Expr {
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
      let end = t.span.end;
      const b = this.adjacentBracket();
      if (b) {
        this.i++;
        index = this.bracketContent(b, false).index;
        end = b.span.end;
      }
      const nameEnd = end;
      let primes = 0;
      while (this.isOp("'")) {
        const p = this.toks[this.i++];
        if (p.span.start !== end) break; // primes must touch the name
        primes++;
        end = p.span.end;
      }
      const nameSpan = { start: t.delta ? t.span.start + 1 : t.span.start, end: nameEnd };
      const ne: A.NameExpr = { kind: 'name', name: t.text, primes, delta: !!t.delta, span: { start: t.span.start, end }, nameSpan };
      if (index) ne.index = index;
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

/**
 * A sign before an operand. A sign written directly before a quantity (`-5 [degC]`, `-(5 [degC])`) belongs
 * to the number: it is the value in that unit, so an offset unit converts the signed value
 * (−5 °C = 268.15 K, SI Brochure 9th ed. 2.3.1), never the negated conversion (−278.15 K). Folding it here,
 * once, keeps every later stage (constants, point values, lowering, hovers) right without special cases.
 */
function signed(op: '-' | '+', arg: A.Expr, start: number): A.Expr {
  const span = { start, end: arg.span.end };
  if (arg.kind === 'number' && arg.unit) {
    const neg = op === '-';
    const text = neg ? (arg.text.startsWith('-') ? arg.text.slice(1) : '-' + arg.text) : arg.text;
    return { ...arg, value: neg ? -arg.value : arg.value, text, span };
  }
  return { kind: 'unary', op, arg, span };
}

export function parse(text: string): ParseResult {
  const diagnostics: Diagnostic[] = [];
  let lexed;
  try {
    lexed = lex(text);
  } catch {
    return { file: { statements: [], comments: [], length: text.length }, diagnostics: [] };
  }
  diagnostics.push(...lexed.diagnostics);
  const lines = splitLines(lexed.tokens);
  const statements: A.Statement[] = [];

  let li = 0;
  const blockLines = (): Line[] => {
    const out: Line[] = [];
    while (li < lines.length && lines[li].indent > 0) out.push(lines[li++]);
    return out;
  };

  while (li < lines.length) {
    const line = lines[li++];
    try {
      const p = new LineParser(line.tokens, line.span.end, text);
      const first = line.tokens[0];
      const kw = first.kind === 'name' && !first.delta ? first.text : '';
      if (kw === 'point' || kw === 'linear' || kw === 'sweep') {
        const body = blockLines();
        const block = parseBlock(kw, p, line, body, diagnostics, text);
        if (block.kind === 'linear' && block.digest) {
          const d = block.digest.span;
          block.digest.text = text.slice(d.start, d.end);
          // a hex digest such as 436e7389 lexes as a (too large) number: it is a digest, not a malformed number
          for (let k = diagnostics.length - 1; k >= 0; k--) {
            const x = diagnostics[k];
            if (x.code === 'P108' && x.span.start >= d.start && x.span.end <= d.end) diagnostics.splice(k, 1);
          }
        }
        statements.push(block);
        continue;
      }
      if (kw === 'each') {
        statements.push(parseEach(p, line, blockLines(), diagnostics, text));
        continue;
      }
      statements.push(parseStatement(p, line));
    } catch (e) {
      if (e instanceof SyntaxError_) diagnostics.push(e.d);
      else diagnostics.push(diag('P101', line.span, { found: 'text', expected: 'a statement' }));
    }
  }
  return { file: { statements, comments: lexed.comments, length: text.length }, diagnostics };
}

/** `each i in A..B[, j in C..D]:` followed by indented statements, or one statement after the colon. */
function parseEach(p: LineParser, header: Line, body: Line[], diagnostics: Diagnostic[], src: string): A.EachBlock {
  p.i++;
  const indices: A.EachBlock['indices'] = [];
  for (;;) {
    const name = p.expectName('the index name, e.g. each i in 1..n:');
    if (!p.isName('in')) p.fail('"in" and the index range, e.g. each i in 1..n:');
    p.i++;
    indices.push({ name, range: p.rangeHere() });
    if (p.isOp(',')) {
      p.i++;
      continue;
    }
    break;
  }
  p.expectOp(':', '":" at the end of the each header');
  const end = body.length ? body[body.length - 1].span.end : header.span.end;
  const block: A.EachBlock = { kind: 'each', indices, body: [], span: { start: header.span.start, end }, headerSpan: header.span };
  const inBody = (l: Line, lp: LineParser): void => {
    try {
      const st = parseStatement(lp, l, true);
      if (st.kind !== 'equation' && st.kind !== 'output' && st.kind !== 'each') throw new SyntaxError_(diag('P123', l.span));
      block.body.push(st);
    } catch (e) {
      if (e instanceof SyntaxError_) diagnostics.push(e.d);
      else diagnostics.push(diag('P101', l.span, { found: 'text', expected: 'an equation' }));
    }
  };
  if (!p.atEnd()) {
    const rest = p.toks.slice(p.i);
    const line: Line = { tokens: rest, indent: header.indent, span: { start: rest[0].span.start, end: header.span.end } };
    inBody(line, new LineParser(rest, header.span.end, src));
    if (body.length) diagnostics.push(diag('P106', body[0].span));
    return block;
  }
  if (!body.length) diagnostics.push(diag('P112', header.span, { name: 'each' }));
  for (let k = 0; k < body.length; k++) {
    const l = body[k];
    const first = l.tokens[0];
    if (first.kind === 'name' && !first.delta && first.text === 'each') {
      const inner: Line[] = [];
      while (k + 1 < body.length && body[k + 1].indent > l.indent) inner.push(body[++k]);
      try {
        block.body.push(parseEach(new LineParser(l.tokens, l.span.end, src), l, inner, diagnostics, src));
      } catch (e) {
        if (e instanceof SyntaxError_) diagnostics.push(e.d);
      }
      continue;
    }
    inBody(l, new LineParser(l.tokens, l.span.end, src));
  }
  return block;
}

function parseStatement(p: LineParser, line: Line, inEach = false): A.Statement {
  const first = p.peek()!;
  const kw = first.kind === 'name' && !first.delta ? first.text : '';
  const span = line.span;
  switch (kw) {
    case 'time': {
      p.i++;
      let unit: A.UnitRef | undefined;
      const u = p.peek();
      if (u && u.kind === 'unit') {
        p.i++;
        unit = { text: u.text, span: u.span };
      }
      p.expectEnd('a unit in brackets, e.g. time [min]');
      return { kind: 'time', unit, span };
    }
    case 'const': {
      p.i++;
      if (!p.isName()) throw new SyntaxError_(diag('P105', p.here(), { keyword: 'const' }));
      const name = p.declName();
      p.expectOp('=', '"=" and the value, e.g. const area = 1.2 [m^2]');
      const value = p.expr();
      p.expectEnd('end of line after the value');
      return { kind: 'const', name, value, span };
    }
    case 'input':
    case 'state':
    case 'var': {
      p.i++;
      if (!p.isName()) throw new SyntaxError_(diag('P105', p.here(), { keyword: kw }));
      const names: A.Ident[] = [p.declName()];
      while (p.isOp(',')) {
        p.i++;
        names.push(p.declName());
      }
      let unit: A.UnitRef | undefined;
      const u = p.peek();
      if (u && u.kind === 'unit') {
        p.i++;
        unit = { text: u.text, span: u.span };
      }
      p.expectEnd('"," with another name, a unit in brackets, or end of line');
      return { kind: kw, names, unit, span };
    }
    case 'output': {
      p.i++;
      if (!p.isName()) throw new SyntaxError_(diag('P105', p.here(), { keyword: 'output' }));
      const name = p.expectName();
      const ob = p.adjacentBracket();
      if (ob && (inEach || /^\s*\d+\s*$/.test(ob.text))) {
        p.i++;
        name.index = p.bracketContent(ob, false).index;
      } else if (ob && /\.\./.test(ob.text)) {
        throw new SyntaxError_(diag('P122', ob.span, { name: name.name }));
      }
      let unit: A.UnitRef | undefined;
      const u = p.peek();
      if (u && u.kind === 'unit') {
        p.i++;
        unit = { text: u.text, span: u.span };
      }
      p.expectOp('=', '"=" and the expression that defines the output');
      const value = p.expr();
      p.expectEnd('end of line after the expression');
      return { kind: 'output', name, unit, value, span };
    }
    default:
      return parseEquation(p, span);
  }
}

function parseEquation(p: LineParser, span: Span): A.EquationStmt {
  const lhs = p.expr();
  if (!p.isOp('=')) {
    if (p.atEnd()) throw new SyntaxError_(diag('P110', span));
    p.fail('"=" or an operator');
  }
  const eq = p.toks[p.i++];
  const rhs = p.expr();
  p.expectEnd('an operator or end of line');
  return { kind: 'equation', lhs, rhs, span, eqSpan: eq.span };
}

function parseBlock(kw: 'point' | 'linear' | 'sweep', p: LineParser, header: Line, body: Line[], diagnostics: Diagnostic[], src: string): A.Statement {
  p.i++;
  const name: A.Ident = p.isName() ? p.expectName() : { name: '', span: p.here() };
  if (!name.name) diagnostics.push(diag('P105', p.here(), { keyword: kw }));
  const end = body.length ? body[body.length - 1].span.end : header.span.end;
  const span = { start: header.span.start, end };
  const headerSpan = header.span;
  const tryLine = <T>(f: () => T): T | undefined => {
    try {
      return f();
    } catch (e) {
      if (e instanceof SyntaxError_) diagnostics.push(e.d);
      return undefined;
    }
  };

  if (kw === 'point') {
    if (name.name) tryLine(() => {
      p.expectOp(':', '":" at the end of the point header');
      p.expectEnd('end of line after ":"');
    });
    const lines: A.PointLine[] = [];
    for (const l of body) {
      const r = tryLine(() => {
        const lp = new LineParser(l.tokens, l.span.end, src);
        const t = lp.peek()!;
        if (t.kind !== 'name') throw new SyntaxError_(diag('P107', l.span));
        lp.i++;
        let index: A.Expr | undefined;
        const b = lp.adjacentBracket();
        if (b) {
          lp.i++;
          index = lp.bracketContent(b, false).index;
        }
        let primes = 0;
        while (lp.isOp("'")) {
          lp.i++;
          primes++;
        }
        const m = lp.peek();
        if (!m || m.kind !== 'op' || (m.text !== '=' && m.text !== '~')) throw new SyntaxError_(diag('P107', m ? m.span : l.span));
        lp.i++;
        const value = lp.expr();
        lp.expectEnd('end of line after the value');
        const pl: A.PointLine = { name: { name: t.text, span: t.span }, mode: m.text === '=' ? 'fixed' : 'guess', value, primes, span: l.span };
        if (index) pl.index = index;
        return pl;
      });
      if (r) lines.push(r);
    }
    return { kind: 'point', name, lines, span, headerSpan };
  }

  if (kw === 'linear') {
    let digest: A.LinearBlock['digest'];
    if (name.name) tryLine(() => {
      if (p.isName('digest')) {
        p.i++;
        const t = p.peek();
        if (!t || (t.kind !== 'name' && t.kind !== 'number')) p.fail('the digest (8 hex digits)');
        // a digest like 5e1c03aa lexes as number+name pieces; take the raw text up to ':'
        const start = t.span.start;
        let stop = t.span.end;
        p.i++;
        while (!p.atEnd() && !p.isOp(':')) stop = p.toks[p.i++].span.end;
        digest = { text: '', span: { start, end: stop } };
      }
      p.expectOp(':', '":" at the end of the linear header');
      p.expectEnd('end of line after ":"');
    });
    const at: A.LinearAt[] = [];
    const equations: A.EquationStmt[] = [];
    for (const l of body) {
      tryLine(() => {
        const lp = new LineParser(l.tokens, l.span.end, src);
        if (lp.isName('at')) {
          lp.i++;
          for (;;) {
            const n = lp.expectName();
            const b = lp.adjacentBracket();
            if (b) {
              lp.i++;
              n.index = lp.bracketContent(b, false).index;
            }
            lp.expectOp('=');
            const value = lp.expr();
            at.push({ name: n, value, span: { start: n.span.start, end: value.span.end } });
            if (lp.isOp(',')) {
              lp.i++;
              continue;
            }
            break;
          }
          lp.expectEnd('"," or end of line');
          return;
        }
        equations.push(parseEquation(lp, l.span));
      });
    }
    return { kind: 'linear', name, digest, at, equations, span, headerSpan };
  }

  // sweep NAME from POINT:
  let point: A.Ident | undefined;
  if (name.name) tryLine(() => {
    if (!p.isName('from')) p.fail('"from" and the point to start from, e.g. sweep s1 from nominal:');
    p.i++;
    point = p.expectName('the name of a point');
    p.expectOp(':', '":" at the end of the sweep header');
    p.expectEnd('end of line after ":"');
  });
  let vary: A.SweepBlock['vary'];
  if (!body.length) diagnostics.push(diag('P112', headerSpan, { name: name.name }));
  for (const l of body) {
    tryLine(() => {
      const lp = new LineParser(l.tokens, l.span.end, src);
      if (!lp.isName('vary')) throw new SyntaxError_(diag('P113', l.span));
      lp.i++;
      const n = lp.expectName();
      lp.expectOp('=');
      const from = lp.expr();
      if (!lp.isName('to')) lp.fail('"to"');
      lp.i++;
      const to = lp.expr();
      if (!lp.isName('steps')) lp.fail('"steps"');
      lp.i++;
      const st = lp.peek();
      if (!st || st.kind !== 'number' || !Number.isInteger(st.value) || (st.value ?? 0) < 1) lp.fail('a whole number of steps');
      lp.i++;
      let log = false;
      if (lp.isName('log')) {
        lp.i++;
        log = true;
      }
      lp.expectEnd('"log" or end of line');
      if (vary) throw new SyntaxError_(diag('P113', l.span));
      vary = { name: n, from, to, steps: st!.value!, stepsSpan: st!.span, log, span: l.span };
    });
  }
  return { kind: 'sweep', name, point, vary, span, headerSpan };
}
