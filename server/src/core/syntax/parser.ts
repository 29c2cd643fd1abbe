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
  'time', 'const', 'input', 'state', 'var', 'output', 'point', 'linear', 'digest', 'at', 'sweep', 'from', 'vary', 'to', 'steps', 'log',
]);
/** Words that start a statement; they cannot be used as names. `log` stays a function name. */
export const RESERVED = new Set(['time', 'const', 'input', 'state', 'var', 'output', 'point', 'linear', 'sweep']);

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
  constructor(readonly toks: Token[], readonly endOffset: number) {}

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
      let primes = 0;
      let end = t.span.end;
      while (this.isOp("'")) {
        const p = this.toks[this.i++];
        if (p.span.start !== end) break; // primes must touch the name
        primes++;
        end = p.span.end;
      }
      const nameSpan = t.delta ? { start: t.span.start + 1, end: t.span.end } : t.span;
      return { kind: 'name', name: t.text, primes, delta: !!t.delta, span: { start: t.span.start, end }, nameSpan };
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
      const p = new LineParser(line.tokens, line.span.end);
      const first = line.tokens[0];
      const kw = first.kind === 'name' && !first.delta ? first.text : '';
      if (kw === 'point' || kw === 'linear' || kw === 'sweep') {
        const body = blockLines();
        const block = parseBlock(kw, p, line, body, diagnostics);
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
      statements.push(parseStatement(p, line));
    } catch (e) {
      if (e instanceof SyntaxError_) diagnostics.push(e.d);
      else diagnostics.push(diag('P101', line.span, { found: 'text', expected: 'a statement' }));
    }
  }
  return { file: { statements, comments: lexed.comments, length: text.length }, diagnostics };
}

function parseStatement(p: LineParser, line: Line): A.Statement {
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
      const name = p.expectName();
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
      const names: A.Ident[] = [p.expectName()];
      while (p.isOp(',')) {
        p.i++;
        names.push(p.expectName());
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

function parseBlock(kw: 'point' | 'linear' | 'sweep', p: LineParser, header: Line, body: Line[], diagnostics: Diagnostic[]): A.Statement {
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
        const lp = new LineParser(l.tokens, l.span.end);
        const t = lp.peek()!;
        if (t.kind !== 'name') throw new SyntaxError_(diag('P107', l.span));
        lp.i++;
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
        const lp = new LineParser(l.tokens, l.span.end);
        if (lp.isName('at')) {
          lp.i++;
          for (;;) {
            const n = lp.expectName();
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
      const lp = new LineParser(l.tokens, l.span.end);
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
