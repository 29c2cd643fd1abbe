/**
 * Lookup tables (docs/language.md, "Lookup tables"): the rows of each `table` statement, written in the
 * model or read from a CSV file beside it through the SourceHost (core/sources.ts), converted to SI and
 * made into an interpolant (numeric/interpolate.ts: linear, or monotone cubic after Fritsch & Carlson 1980).
 */
import type * as A from '../syntax/ast';
import { diag, type Diagnostic } from '../diagnostics';
import type { TableSource } from '../algebra/expr';
import { makeTable, parseTableCsv, tableProblem } from '../numeric/interpolate';
import type { SourceHost } from '../sources';
import { parseUnit } from './units';
import type { BoundModel } from './binder';
import type { Span } from '../text';

/**
 * The address of `relative` beside the document `base`: a file path or a URI, with `/` or `\` as
 * separators; `.` and `..` segments are resolved. An absolute path is returned as written.
 */
export function besideDocument(base: string, relative: string): string {
  if (/^([a-zA-Z]:[\\/]|[\\/])/.test(relative) || /^[a-zA-Z][\w+.-]*:\/\//.test(relative)) return relative;
  const cut = Math.max(base.lastIndexOf('/'), base.lastIndexOf('\\'));
  const dir = cut >= 0 ? base.slice(0, cut + 1) : '';
  const sep = dir.includes('\\') && !dir.includes('/') ? '\\' : '/';
  const parts = (dir + relative).split(/[\\/]/);
  const out: string[] = [];
  for (let k = 0; k < parts.length; k++) {
    const p = parts[k];
    if (p === '.' && k > 0) continue;
    if (p === '..' && out.length > 1 && out[out.length - 1] !== '..' && out[out.length - 1] !== '') out.pop();
    else out.push(p);
  }
  return out.join(sep);
}

export interface TablesResult {
  tables: Map<string, TableSource>;
  diagnostics: Diagnostic[];
}

/** Builds every table of a bound model; a table that cannot be built is left out (its calls lower to NaN). */
export function buildTables(m: BoundModel, host: SourceHost, uri: string): TablesResult {
  const tables = new Map<string, TableSource>();
  const diagnostics: Diagnostic[] = [];
  for (const t of m.tables.values()) {
    const unit = (ref: A.UnitRef | undefined) => {
      if (!ref) return { text: '', scale: 1, offset: 0 };
      const u = parseUnit(ref.text);
      return typeof u === 'string' ? undefined : { text: u.text, scale: u.scale, offset: u.offset };
    };
    const xu = unit(t.xUnit);
    const yu = unit(t.yUnit);
    if (!xu || !yu) continue; // the unit checker reports the unit
    let xs: number[] = t.rows.map((r) => r.x);
    let ys: number[] = t.rows.map((r) => r.y);
    let where: Span = t.headerSpan;
    if (t.file) {
      where = t.file.span;
      const address = besideDocument(uri, t.file.text);
      const text = host.read(address);
      if (text === undefined) {
        diagnostics.push(diag('P133', t.file.span, { file: t.file.text, name: t.name.name, where: address }));
        continue;
      }
      const csv = parseTableCsv(text);
      if ('problem' in csv) {
        diagnostics.push(diag('P134', t.file.span, { line: csv.line, file: t.file.text, name: t.name.name, detail: csv.problem }));
        continue;
      }
      xs = csv.x;
      ys = csv.y;
    } else if (!t.rows.length) continue; // P112 already
    const problem = tableProblem(xs, ys);
    if (problem) {
      // a row's own range when the problem names a row of the model
      const row = /row (\d+)/.exec(problem);
      const span = !t.file && row ? t.rows[Number(row[1]) - 1]?.span ?? where : where;
      diagnostics.push(diag('P132', span, { name: t.name.name, detail: problem + (t.file ? ` in "${t.file.text}"` : '') }));
      continue;
    }
    const table = makeTable(xs.map((x) => x * xu.scale + xu.offset), ys.map((y) => y * yu.scale + yu.offset), t.interpolation);
    tables.set(t.name.name, { name: t.name.name, table, outside: t.outside, xUnit: xu, yUnit: yu, span: t.name.span });
  }
  return { tables, diagnostics };
}
