/**
 * The outline of a model file, grouped by kind: constants, tables, inputs, states, vars, outputs, equations,
 * points, linear blocks, sweeps (groups in that order, items in file order). Pure.
 */
import type { Analysis } from '../pipeline/analysis';
import type { Span } from '../text';
import { maxOf, minOf } from '../arrays';

export type OutlineKind = 'group' | 'const' | 'input' | 'state' | 'var' | 'output' | 'equation' | 'point' | 'pointLine' | 'linear' | 'sweep';

export interface OutlineItem {
  name: string;
  detail?: string;
  kind: OutlineKind;
  /** The whole construct. */
  span: Span;
  /** The name (or the construct when it has none). */
  selection: Span;
  children?: OutlineItem[];
}

const oneLine = (s: string) => {
  const t = s.replace(/\s+/g, ' ').trim();
  return t.length > 60 ? t.slice(0, 57) + '…' : t;
};

export function documentOutline(a: Analysis): OutlineItem[] {
  const m = a.bound;
  const groups: OutlineItem[] = [];
  const group = (name: string, items: OutlineItem[]) => {
    if (!items.length) return;
    const span = { start: minOf(items.map((i) => i.span.start)), end: maxOf(items.map((i) => i.span.end)) };
    groups.push({ name, kind: 'group', span, selection: items[0].selection, detail: `${items.length}`, children: items });
  };
  const unit = (u?: { text: string }) => (u ? `[${u.text}]` : '');
  group('Constants', m.consts.map((s) => ({ name: s.name, kind: 'const', detail: oneLine(a.text.slice((s.decl as { value: { span: Span } }).value.span.start, s.decl.span.end)), span: s.decl.span, selection: s.span })));
  // lookup tables: data, listed as constants are (an editor shows them with the constant's icon)
  group('Tables', [...m.tables.values()].map((t) => ({
    name: t.name.name, kind: 'const', span: t.span, selection: t.name.span,
    detail: `${unit(t.xUnit)} → ${unit(t.yUnit)}, ${t.interpolation}${t.file ? `, from "${t.file.text}"` : `, ${t.rows.length} rows`}`,
  })));
  group('Inputs', m.inputs.map((s) => ({ name: s.name, kind: 'input', detail: unit(s.unit), span: s.decl.span, selection: s.span })));
  group('States', m.states.map((s) => ({ name: s.name, kind: 'state', detail: unit(s.unit), span: s.decl.span, selection: s.span })));
  group('Vars', m.vars.map((s) => ({ name: s.name, kind: 'var', detail: unit(s.unit), span: s.decl.span, selection: s.span })));
  group('Outputs', m.outputs.map((s) => ({ name: s.name, kind: 'output', detail: unit(s.unit), span: s.decl.span, selection: s.span })));
  group('Equations', m.equations.map((e) => ({ name: oneLine(a.text.slice(e.span.start, e.span.end)), kind: 'equation', span: e.span, selection: e.eqSpan })));
  group('Points', m.points.filter((p) => p.name.name).map((p) => ({
    name: p.name.name, kind: 'point', span: p.span, selection: p.name.span, detail: `${p.lines.length} line(s)`,
    children: p.lines.map((l) => ({ name: l.name.name, kind: 'pointLine' as const, detail: `${l.mode === 'fixed' ? '=' : '~'} ${oneLine(a.text.slice(l.value.span.start, l.value.span.end))}`, span: l.span, selection: l.name.span })),
  })));
  group('Linear blocks', m.linears.map((l) => ({ name: l.name.name || '(unnamed)', kind: 'linear', span: l.span, selection: l.name.name ? l.name.span : l.headerSpan, detail: `${l.equations.length} equation(s)` })));
  group('Sweeps', m.sweeps.map((s) => ({ name: s.name.name || '(unnamed)', kind: 'sweep', span: s.span, selection: s.name.name ? s.name.span : s.headerSpan, detail: s.point ? `from ${s.point.name}` : undefined })));
  return groups;
}
