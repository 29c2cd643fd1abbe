/**
 * The `table` statement (docs/language.md, "Lookup tables"):
 *
 *   table NAME [x unit] to [y unit] [linear|monotone] [hold|strict]:     rows below, indented: `x  y` or `x, y`
 *   table NAME [x unit] to [y unit] [linear|monotone] [hold|strict] from "file.csv"
 *
 * `table` starts this statement only when a name follows it, so `table` stays usable as a name elsewhere;
 * the words after the units have meaning by position only.
 */
import type * as A from './ast';
import { diag, type Diagnostic } from '../diagnostics';
import { LineParser, SyntaxError_, describe, type Line } from './lineParser';
import type { Token } from './lexer';

/** Whether a line starts a table statement: the word `table` followed by a name. */
export function isTableLine(line: Line): boolean {
  const [a, b] = line.tokens;
  return !!a && !!b && a.kind === 'name' && !a.delta && a.text === 'table' && b.kind === 'name' && !b.delta;
}

const HEADER_HELP = 'e.g. table cv [%] to [m^3/h] monotone: (rows below) or … from "cv.csv"';

export function parseTable(p: LineParser, header: Line, body: Line[], diagnostics: Diagnostic[]): A.TableDecl {
  p.i++;
  const name = p.expectName('the table\'s name');
  const unitHere = (what: string): A.UnitRef => {
    const u = p.peek();
    if (!u || u.kind !== 'unit') p.fail(`${what} in brackets (${HEADER_HELP})`);
    p.i++;
    return { text: u.text, span: u.span };
  };
  const xUnit = unitHere('the unit of the breakpoints');
  if (!p.isName('to')) p.fail(`"to" and the unit of the values (${HEADER_HELP})`);
  p.i++;
  const yUnit = unitHere('the unit of the values');
  let interpolation: A.TableDecl['interpolation'] = 'linear';
  let outside: A.TableDecl['outside'] = 'hold';
  let file: A.TableDecl['file'];
  while (p.isName()) {
    const w = p.peek()!.text;
    if (w === 'linear' || w === 'monotone') interpolation = w;
    else if (w === 'hold' || w === 'strict') outside = w;
    else if (w === 'from') {
      p.i++;
      const s = p.peek();
      if (!s || s.kind !== 'string') p.fail('the file\'s name in double quotes, e.g. from "cv.csv"');
      file = { text: s.text, span: s.span };
    } else p.fail('"linear", "monotone", "hold", "strict", "from" or ":"');
    p.i++;
  }
  const table: A.TableDecl = {
    kind: 'table', name, xUnit, yUnit, interpolation, outside, rows: [], file,
    span: { start: header.span.start, end: body.length ? body[body.length - 1].span.end : header.span.end }, headerSpan: header.span,
  };
  if (file) {
    p.expectEnd('end of line after the file name');
    if (body.length) diagnostics.push(diag('P131', body[0].span, { name: name.name }));
    return table;
  }
  p.expectOp(':', '":" with the rows below, or from "file.csv"');
  p.expectEnd('end of line after ":" (the rows go on the indented lines below)');
  if (!body.length) diagnostics.push(diag('P112', header.span, { name: name.name }));
  for (const l of body) {
    try {
      const [x, k] = rowNumber(l.tokens, 0, l);
      let j = k;
      if (l.tokens[j] && l.tokens[j].kind === 'op' && l.tokens[j].text === ',') j++;
      const [y, end] = rowNumber(l.tokens, j, l);
      if (end < l.tokens.length) throw new SyntaxError_(diag('P101', l.tokens[end].span, { found: describe(l.tokens[end]), expected: 'end of the row (a row is a breakpoint and a value)' }));
      table.rows.push({ x, y, span: l.span });
    } catch (e) {
      if (e instanceof SyntaxError_) diagnostics.push(e.d);
    }
  }
  return table;
}

/** A signed number at tokens[k]; returns the value and the index after it. */
function rowNumber(toks: Token[], k: number, l: Line): [number, number] {
  let sign = 1;
  let j = k;
  const t0 = toks[j];
  if (t0 && t0.kind === 'op' && (t0.text === '-' || t0.text === '+')) {
    if (t0.text === '-') sign = -1;
    j++;
  }
  const t = toks[j];
  if (!t || t.kind !== 'number') {
    const at = t ?? toks[toks.length - 1];
    throw new SyntaxError_(diag('P101', t ? t.span : { start: l.span.end, end: l.span.end }, { found: describe(at && t ? t : undefined), expected: 'a number (a row is a breakpoint and a value, e.g. 20  1.5)' }));
  }
  return [sign * (t.value ?? Number(t.text)), j + 1];
}
