/**
 * Parser: tokens → syntax tree. Error-tolerant: never throws, reports each error with its exact span
 * and resumes at the next logical line, so the rest of the file is still analysed.
 */
import type * as A from './ast';
import { diag, type Diagnostic } from '../diagnostics';
import { Lexer, type Token } from './lexer';
import { LineParser, SyntaxError_, type Line } from './lineParser';
import { isTableLine, parseTable } from './tableParser';
export { MAX_NESTING } from './lineParser';
import type { Span } from '../text';

export interface ParseResult {
  file: A.ModelFile;
  diagnostics: Diagnostic[];
}

export const KEYWORDS = new Set([
  'time', 'const', 'input', 'state', 'var', 'output', 'point', 'linear', 'digest', 'at', 'sweep', 'from', 'vary', 'to', 'steps', 'log', 'each', 'in',
  'part', 'place', 'as', 'with', 'parts',
]);
/** Words that start a statement; they cannot be used as names. `log` stays a function name. */
export const RESERVED = new Set(['time', 'const', 'input', 'state', 'var', 'output', 'point', 'linear', 'sweep', 'each']);

export function parse(text: string): ParseResult {
  // the file is lexed line by line as the statements take it, so each line's tokens go once it is parsed
  const lexer = new Lexer(text);
  const lines = new LineReader(lexer);
  const diagnostics: Diagnostic[] = [];
  const statements: A.Statement[] = [];

  const blockLines = (): Line[] => {
    const out: Line[] = [];
    for (let l = lines.peek(); l && l.indent > 0; l = lines.peek()) out.push(lines.take()!);
    return out;
  };

  for (let line = lines.take(); line; line = lines.take()) {
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
          for (const ds of [lexer.diagnostics, diagnostics]) {
            for (let k = ds.length - 1; k >= 0; k--) {
              const x = ds[k];
              if (x.code === 'P108' && x.span.start >= d.start && x.span.end <= d.end) ds.splice(k, 1);
            }
          }
        }
        statements.push(block);
        continue;
      }
      if (isTableLine(line)) {
        statements.push(parseTable(p, line, blockLines(), diagnostics));
        continue;
      }
      if (kw === 'each') {
        statements.push(parseEach(p, line, blockLines(), diagnostics, text));
        continue;
      }
      // `part`, `place` and `parts` are words of a statement only when a name follows them
      if (kw === 'part' && p.isName(undefined, 1)) {
        statements.push(parsePart(p, line, blockLines(), diagnostics, text));
        continue;
      }
      if (kw === 'place' && p.isName(undefined, 1)) {
        statements.push(parsePlace(p, line));
        continue;
      }
      if (kw === 'parts' && (p.isName(undefined, 1) || p.peek(1)?.kind === 'string')) {
        statements.push(parsePartsFrom(p, line));
        continue;
      }
      statements.push(parseStatement(p, line));
    } catch (e) {
      if (e instanceof SyntaxError_) diagnostics.push(e.d);
      else diagnostics.push(diag('P101', line.span, { found: 'text', expected: 'a statement' }));
    }
  }
  // the lexer's diagnostics first, then the statements' (as when the whole file was lexed before parsing)
  const all = lexer.diagnostics.length ? [...lexer.diagnostics, ...diagnostics] : diagnostics;
  return { file: { statements, comments: lexer.comments, length: text.length }, diagnostics: all };
}

/** The logical lines of a file (a line's tokens without its newline), read from the lexer one at a time. */
class LineReader {
  private ahead: Line | undefined;
  private done = false;
  constructor(private readonly lexer: Lexer) {}

  peek(): Line | undefined {
    if (!this.ahead && !this.done) this.ahead = this.read();
    return this.ahead;
  }

  take(): Line | undefined {
    const l = this.peek();
    this.ahead = undefined;
    return l;
  }

  private read(): Line | undefined {
    let cur: Token[] = [];
    for (;;) {
      const t = this.lexer.next();
      if (t.kind === 'newline' || t.kind === 'eof') {
        if (cur.length) return { tokens: cur, indent: cur[0].indent ?? 0, span: { start: cur[0].span.start, end: cur[cur.length - 1].span.end } };
        if (t.kind === 'eof') {
          this.done = true;
          return undefined;
        }
        cur = [];
      } else cur.push(t);
    }
  }
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
      const tolerance = toleranceBand(p);
      p.expectEnd(tolerance ? 'end of line after the tolerance' : 'end of line after the value, or a tolerance such as ± 5 %');
      return tolerance ? { kind: 'const', name, value, span, tolerance } : { kind: 'const', name, value, span };
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
        const m = p.member();
        if (m) name.member = m;
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
        let member: A.Member | undefined;
        const b = lp.adjacentBracket();
        if (b) {
          lp.i++;
          index = lp.bracketContent(b, false).index;
          member = lp.member();
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
        if (member) pl.name.member = member;
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
              const m = lp.member();
              if (m) n.member = m;
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
      const b = lp.adjacentBracket();
      if (b) {
        // an element (h[3]) or a member of an element of a family of instances (v[2].opening)
        lp.i++;
        n.index = lp.bracketContent(b, false).index;
        const m = lp.member();
        if (m) n.member = m;
      }
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

/** `± EXPR [%]` after a constant's value (`+/-` is the same sign); undefined when the line has none. */
function toleranceBand(p: LineParser): A.ToleranceBand | undefined {
  if (!p.isOp('±')) return undefined;
  const start = p.peek()!.span.start;
  p.i++;
  const value = p.expr();
  let end = value.span.end;
  const percent = p.isOp('%');
  if (percent) end = p.toks[p.i++].span.end;
  return { value, percent, span: { start, end } };
}

/**
 * `part NAME:` and its indented lines: declarations, equations, outputs, each blocks (with their deeper
 * lines) and places of other parts.
 */
function parsePart(p: LineParser, header: Line, body: Line[], diagnostics: Diagnostic[], src: string): A.PartBlock {
  p.i++;
  const name = p.expectName('the name of the part, e.g. part tank:');
  const end = body.length ? body[body.length - 1].span.end : header.span.end;
  const block: A.PartBlock = { kind: 'part', name, body: [], span: { start: header.span.start, end }, headerSpan: header.span };
  try {
    p.expectOp(':', '":" at the end of the part header');
    p.expectEnd('end of line after ":"');
  } catch (e) {
    if (e instanceof SyntaxError_) diagnostics.push(e.d);
  }
  if (!body.length) diagnostics.push(diag('P112', header.span, { name: name.name }));
  for (let k = 0; k < body.length; k++) {
    const l = body[k];
    const lp = new LineParser(l.tokens, l.span.end, src);
    const first = l.tokens[0];
    const word = first.kind === 'name' && !first.delta ? first.text : '';
    try {
      if (word === 'each') {
        const inner: Line[] = [];
        while (k + 1 < body.length && body[k + 1].indent > l.indent) inner.push(body[++k]);
        block.body.push(parseEach(lp, l, inner, diagnostics, src));
        continue;
      }
      if (word === 'place' && lp.isName(undefined, 1)) {
        block.body.push(parsePlace(lp, l));
        continue;
      }
      if (['point', 'linear', 'sweep', 'time'].includes(word) || ((word === 'part' || word === 'parts') && (lp.isName(undefined, 1) || lp.peek(1)?.kind === 'string'))) {
        throw new SyntaxError_(diag('P135', l.span, { word }));
      }
      block.body.push(parseStatement(lp, l));
    } catch (e) {
      if (e instanceof SyntaxError_) diagnostics.push(e.d);
      else diagnostics.push(diag('P101', l.span, { found: 'text', expected: 'a declaration or an equation' }));
    }
  }
  return block;
}

/** `place PART as NAME[range] [with NAME = VALUE, NAME = VALUE …]`. */
function parsePlace(p: LineParser, line: Line): A.PlaceStmt {
  p.i++;
  const part = p.expectName('the name of a part');
  if (!p.isName('as')) p.fail('"as" and the instance\'s name, e.g. place tank as t1');
  p.i++;
  const name = p.declName('the instance\'s name, e.g. place tank as t1');
  if (name.index) throw new SyntaxError_(diag('P136', name.span, { name: name.name }));
  const overrides: A.Override[] = [];
  if (p.isName('with')) {
    p.i++;
    for (;;) {
      const n = p.expectName('the name of one of the part\'s constants');
      p.expectOp('=', '"=" and the constant\'s value for this instance');
      const value = p.expr();
      overrides.push({ name: n, value, span: { start: n.span.start, end: value.span.end } });
      if (p.isOp(',')) {
        p.i++;
        continue;
      }
      break;
    }
  }
  p.expectEnd(overrides.length ? '"," and another constant, or end of line' : '"with" and the constants to change, or end of line');
  return { kind: 'place', part, name, overrides, span: line.span };
}

/** `parts from "FILE"` or `parts A, B from "FILE or FOLDER"`. */
function parsePartsFrom(p: LineParser, line: Line): A.PartsFrom {
  p.i++;
  const names: A.Ident[] = [];
  if (p.isName() && !p.isName('from')) {
    names.push(p.expectName());
    while (p.isOp(',')) {
      p.i++;
      names.push(p.expectName('the name of a part'));
    }
  }
  if (!p.isName('from')) p.fail('"from" and the file in double quotes, e.g. parts from "library/tank.poise"');
  p.i++;
  const t = p.peek();
  if (!t || t.kind !== 'string') p.fail('the file or folder in double quotes, e.g. "library/tank.poise"');
  p.i++;
  p.expectEnd('end of line after the file');
  return { kind: 'parts', names, path: { text: t.text, span: t.span }, span: line.span };
}
