/**
 * Lexer: text → tokens. Never throws. Newlines are tokens, except where a line continues
 * (an open parenthesis, or a line ending in a binary operator or comma). Comments are kept aside.
 */
import { diag, type Diagnostic } from '../diagnostics';
import type { Span } from '../text';

export type TokenKind =
  | 'name' // identifier; `delta` set when written with a leading Δ
  | 'number'
  | 'unit' // text between [ and ]
  | 'string' // text between double quotes on one line (a file name: `from "valve.csv"`, a path in `parts from "…"`); text without the quotes
  | 'op' // + - * / ^ ( ) , = ~ : ' { } .. < <= > >= and . (between an element's index and a member: cell[3].level)
  | 'newline'
  | 'eof';

export interface Token {
  kind: TokenKind;
  text: string; // for names: the name without Δ; for units: the inside of the brackets (trimmed)
  span: Span;
  /** First token of a logical line: the column of its first character (indentation). */
  indent?: number;
  delta?: boolean;
  value?: number;
}

export interface LexResult {
  tokens: Token[];
  comments: Span[];
  diagnostics: Diagnostic[];
}

const OPS = new Set(['+', '-', '*', '/', '^', '(', ')', ',', '=', '~', ':', "'", '{', '}']);
const CONTINUES = new Set(['+', '-', '*', '/', '^', ',', '=', '<', '<=', '>', '>=']);
const nameStart = /[\p{L}_]/u;
const namePart = /[\p{L}\p{N}_]/u;

export function lex(text: string): LexResult {
  const lx = new Lexer(text);
  const tokens: Token[] = [];
  for (;;) {
    const t = lx.next();
    tokens.push(t);
    if (t.kind === 'eof') break;
  }
  return { tokens, comments: lx.comments, diagnostics: lx.diagnostics };
}

/**
 * The lexer as a stream: `next()` gives one token at a time (the same tokens `lex` lists, eof last and
 * again after it), so a parser can take a file line by line and let each line's tokens go once parsed.
 * Comments and diagnostics collect as the text is read.
 */
export class Lexer {
  readonly comments: Span[] = [];
  readonly diagnostics: Diagnostic[] = [];
  private i = 0;
  private depth = 0;
  private atLineStart = true;
  private lineIndent = 0;
  /** The last token given (newlines too): a line ending in a binary operator continues. */
  private last: Token | undefined;
  constructor(readonly text: string) {}

  next(): Token {
    const text = this.text;
    const n = text.length;
    const comments = this.comments;
    const diagnostics = this.diagnostics;
    let i = this.i;
    let t: Token | undefined;
    while (i < n) {
      const ch = text[i];
      // line start: measure indentation
      if (ch === '\n' || ch === '\r') {
        const start = i;
        i += ch === '\r' && text[i + 1] === '\n' ? 2 : 1;
        const l = this.last;
        // measure the next line's indentation and first character
        let j = i;
        let col = 0;
        while (j < n && (text[j] === ' ' || text[j] === '\t')) {
          col += text[j] === '\t' ? 4 - (col % 4) : 1;
          j++;
        }
        const first = text[j] ?? '';
        const blank = first === '' || first === '\n' || first === '\r' || first === '#';
        const atLineStart = this.atLineStart;
        const trailingOp = !!l && l.kind === 'op' && CONTINUES.has(l.text) && !atLineStart;
        // An open parenthesis continues the line only onto an indented (or operator-led) line, so that a
        // forgotten ")" does not swallow the rest of the file.
        const parenContinues = this.depth > 0 && !blank && (col > 0 || ')+-*/^,'.includes(first));
        const continues = !atLineStart && (parenContinues || (trailingOp && !blank));
        if (this.depth > 0 && !parenContinues) this.depth = 0;
        const newline = !continues && !atLineStart;
        if (!continues) this.atLineStart = true;
        this.lineIndent = col;
        i = j;
        if (newline) {
          t = { kind: 'newline', text: '\n', span: { start, end: start + 1 } };
          break;
        }
        continue;
      }
      if (ch === ' ' || ch === '\t' || ch === '\f' || ch === '\v' || ch === '\u00a0' || ch === '\ufeff') {
        i++;
        continue;
      }
      if (ch === '#') {
        const start = i;
        while (i < n && text[i] !== '\n' && text[i] !== '\r') i++;
        comments.push({ start, end: i });
        continue;
      }
      if (ch === '"') {
        const start = i;
        i++;
        while (i < n && text[i] !== '"' && text[i] !== '\n' && text[i] !== '\r') i++;
        const inner = text.slice(start + 1, i);
        if (text[i] === '"') i++;
        else diagnostics.push(diag('P130', { start, end: i }));
        t = this.first({ kind: 'string', text: inner, span: { start, end: i } });
        break;
      }
      if (ch === '[') {
        const start = i;
        i++;
        while (i < n && text[i] !== ']' && text[i] !== '\n' && text[i] !== '\r') i++;
        const inner = text.slice(start + 1, i);
        if (text[i] === ']') {
          i++;
        } else {
          diagnostics.push(diag('P103', { start, end: i }));
        }
        t = this.first({ kind: 'unit', text: inner.trim(), span: { start, end: i } });
        break;
      }
      if ((ch >= '0' && ch <= '9') || (ch === '.' && text[i + 1] >= '0' && text[i + 1] <= '9')) {
        const start = i;
        while (i < n && text[i] >= '0' && text[i] <= '9') i++;
        if (text[i] === '.' && text[i + 1] !== '.') {
          i++;
          while (i < n && text[i] >= '0' && text[i] <= '9') i++;
        }
        if ((text[i] === 'e' || text[i] === 'E') && /[0-9+-]/.test(text[i + 1] ?? '')) {
          const save = i;
          i++;
          if (text[i] === '+' || text[i] === '-') i++;
          if (!(text[i] >= '0' && text[i] <= '9')) {
            i = save; // not an exponent after all ("2e" followed by name) — leave it
          } else {
            while (i < n && text[i] >= '0' && text[i] <= '9') i++;
          }
        }
        const s = text.slice(start, i);
        const value = Number(s);
        // out of double precision's range: too large becomes Infinity, too small silently 0 — both are errors
        if (!Number.isFinite(value)) diagnostics.push(diag('P114', { start, end: i }, { text: s, what: 'too large', becomes: 'infinite' }));
        else if (value === 0 && /[1-9]/.test(s.replace(/[eE].*$/, ''))) diagnostics.push(diag('P114', { start, end: i }, { text: s, what: 'too small', becomes: '0' }));
        t = this.first({ kind: 'number', text: s, span: { start, end: i }, value: Number.isFinite(value) ? value : 0 });
        break;
      }
      const c0 = text.charCodeAt(i);
      const chs = c0 < 128 ? ch : String.fromCodePoint(text.codePointAt(i)!);
      if ((c0 >= 97 && c0 <= 122) || (c0 >= 65 && c0 <= 90) || c0 === 95 || (c0 >= 128 && (chs === 'Δ' || nameStart.test(chs)))) {
        const start = i;
        let delta = false;
        if (chs === 'Δ') {
          delta = true;
          i += chs.length;
        }
        const nameStartAt = i;
        while (i < n) {
          const code = text.charCodeAt(i);
          // ASCII fast path: letters, digits, underscore
          if ((code >= 97 && code <= 122) || (code >= 65 && code <= 90) || (code >= 48 && code <= 57) || code === 95) {
            i++;
            continue;
          }
          // a qualified name: an instance's name, a dot and a name inside it (tank1.level) is one name
          if (code === 46 && i > nameStartAt && startsName(text, i + 1)) {
            i++;
            continue;
          }
          if (code < 128) break;
          const c = String.fromCodePoint(text.codePointAt(i)!);
          if (c === 'Δ' || !namePart.test(c)) break;
          i += c.length;
        }
        const name = text.slice(nameStartAt, i);
        if (delta && name.length === 0) {
          diagnostics.push(diag('P104', { start, end: i }, { ch: 'Δ' }));
          continue;
        }
        const nt: Token = { kind: 'name', text: name, span: { start, end: i } };
        if (delta) nt.delta = true;
        t = this.first(nt);
        break;
      }
      if (ch === '<' || ch === '>') {
        const two = text[i + 1] === '=';
        t = this.first({ kind: 'op', text: two ? ch + '=' : ch, span: { start: i, end: i + (two ? 2 : 1) } });
        i += two ? 2 : 1;
        break;
      }
      if (ch === '.' && text[i - 1] === ']' && startsName(text, i + 1)) {
        // cell[3].level: the member of an element of a family of instances
        t = this.first({ kind: 'op', text: '.', span: { start: i, end: i + 1 } });
        i++;
        break;
      }
      if (ch === '.' && text[i + 1] === '.') {
        t = this.first({ kind: 'op', text: '..', span: { start: i, end: i + 2 } });
        i += 2;
        break;
      }
      // a tolerance band after a constant's value: "±" (or "+/-", never an expression), "%" after its number
      if (ch === '±' || ch === '%' || (ch === '+' && text.startsWith('+/-', i))) {
        const len = ch === '+' ? 3 : 1;
        t = this.first({ kind: 'op', text: ch === '%' ? '%' : '±', span: { start: i, end: i + len } });
        i += len;
        break;
      }
      if (OPS.has(ch)) {
        if (ch === '(') this.depth++;
        else if (ch === ')') this.depth = Math.max(0, this.depth - 1);
        t = this.first({ kind: 'op', text: ch, span: { start: i, end: i + 1 } });
        i++;
        break;
      }
      // anything else
      diagnostics.push(diag('P104', { start: i, end: i + chs.length }, { ch: chs }));
      i += chs.length;
    }
    this.i = i;
    if (!t) {
      // the end of the text: the last line's newline, then eof (again on every later call)
      if (!this.atLineStart) {
        this.atLineStart = true;
        t = { kind: 'newline', text: '\n', span: { start: n, end: n } };
      } else t = { kind: 'eof', text: '', span: { start: n, end: n }, indent: 0 };
    }
    this.last = t;
    return t;
  }

  /** A token of the line: the first one of a logical line carries the line's indentation. */
  private first(t: Token): Token {
    if (this.atLineStart) {
      t.indent = this.lineIndent;
      this.atLineStart = false;
    }
    return t;
  }
}

/** Whether a name starts at `i` (a letter or underscore; Δ never starts a member). */
function startsName(text: string, i: number): boolean {
  const c0 = text.charCodeAt(i);
  if ((c0 >= 97 && c0 <= 122) || (c0 >= 65 && c0 <= 90) || c0 === 95) return true;
  if (!(c0 >= 128)) return false;
  const c = String.fromCodePoint(text.codePointAt(i)!);
  return c !== 'Δ' && nameStart.test(c);
}
