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
  const tokens: Token[] = [];
  const comments: Span[] = [];
  const diagnostics: Diagnostic[] = [];
  let i = 0;
  let depth = 0;
  let atLineStart = true;
  let lineIndent = 0;
  const n = text.length;

  const push = (t: Token) => {
    if (atLineStart) {
      t.indent = lineIndent;
      atLineStart = false;
    }
    tokens.push(t);
  };
  const last = () => tokens[tokens.length - 1];

  while (i < n) {
    const ch = text[i];
    // line start: measure indentation
    if (ch === '\n' || ch === '\r') {
      const start = i;
      i += ch === '\r' && text[i + 1] === '\n' ? 2 : 1;
      const l = last();
      // measure the next line's indentation and first character
      let j = i;
      let col = 0;
      while (j < n && (text[j] === ' ' || text[j] === '\t')) {
        col += text[j] === '\t' ? 4 - (col % 4) : 1;
        j++;
      }
      const first = text[j] ?? '';
      const blank = first === '' || first === '\n' || first === '\r' || first === '#';
      const trailingOp = !!l && l.kind === 'op' && CONTINUES.has(l.text) && !atLineStart;
      // An open parenthesis continues the line only onto an indented (or operator-led) line, so that a
      // forgotten ")" does not swallow the rest of the file.
      const parenContinues = depth > 0 && !blank && (col > 0 || ')+-*/^,'.includes(first));
      const continues = !atLineStart && (parenContinues || (trailingOp && !blank));
      if (depth > 0 && !parenContinues) depth = 0;
      if (!continues && !atLineStart) {
        tokens.push({ kind: 'newline', text: '\n', span: { start, end: start + 1 } });
      }
      if (!continues) {
        atLineStart = true;
      }
      lineIndent = col;
      i = j;
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
      push({ kind: 'string', text: inner, span: { start, end: i } });
      continue;
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
      push({ kind: 'unit', text: inner.trim(), span: { start, end: i } });
      continue;
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
      const t = text.slice(start, i);
      const value = Number(t);
      // out of double precision's range: too large becomes Infinity, too small silently 0 — both are errors
      if (!Number.isFinite(value)) diagnostics.push(diag('P114', { start, end: i }, { text: t, what: 'too large', becomes: 'infinite' }));
      else if (value === 0 && /[1-9]/.test(t.replace(/[eE].*$/, ''))) diagnostics.push(diag('P114', { start, end: i }, { text: t, what: 'too small', becomes: '0' }));
      push({ kind: 'number', text: t, span: { start, end: i }, value: Number.isFinite(value) ? value : 0 });
      continue;
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
      const t: Token = { kind: 'name', text: name, span: { start, end: i } };
      if (delta) t.delta = true;
      push(t);
      continue;
    }
    if (ch === '<' || ch === '>') {
      const two = text[i + 1] === '=';
      push({ kind: 'op', text: two ? ch + '=' : ch, span: { start: i, end: i + (two ? 2 : 1) } });
      i += two ? 2 : 1;
      continue;
    }
    if (ch === '.' && text[i - 1] === ']' && startsName(text, i + 1)) {
      // cell[3].level: the member of an element of a family of instances
      push({ kind: 'op', text: '.', span: { start: i, end: i + 1 } });
      i++;
      continue;
    }
    if (ch === '.' && text[i + 1] === '.') {
      push({ kind: 'op', text: '..', span: { start: i, end: i + 2 } });
      i += 2;
      continue;
    }
    // a tolerance band after a constant's value: "±" (or "+/-", never an expression), "%" after its number
    if (ch === '±' || ch === '%' || (ch === '+' && text.startsWith('+/-', i))) {
      const len = ch === '+' ? 3 : 1;
      push({ kind: 'op', text: ch === '%' ? '%' : '±', span: { start: i, end: i + len } });
      i += len;
      continue;
    }
    if (OPS.has(ch)) {
      if (ch === '(') depth++;
      else if (ch === ')') depth = Math.max(0, depth - 1);
      push({ kind: 'op', text: ch, span: { start: i, end: i + 1 } });
      i++;
      continue;
    }
    // anything else
    diagnostics.push(diag('P104', { start: i, end: i + chs.length }, { ch: chs }));
    i += chs.length;
  }
  if (!atLineStart) tokens.push({ kind: 'newline', text: '\n', span: { start: n, end: n } });
  tokens.push({ kind: 'eof', text: '', span: { start: n, end: n }, indent: 0 });
  return { tokens, comments, diagnostics };
}

/** Whether a name starts at `i` (a letter or underscore; Δ never starts a member). */
function startsName(text: string, i: number): boolean {
  const c0 = text.charCodeAt(i);
  if ((c0 >= 97 && c0 <= 122) || (c0 >= 65 && c0 <= 90) || c0 === 95) return true;
  if (!(c0 >= 128)) return false;
  const c = String.fromCodePoint(text.codePointAt(i)!);
  return c !== 'Δ' && nameStart.test(c);
}
