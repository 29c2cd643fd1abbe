/**
 * The outline of a model file, grouped by kind: constants, tables, inputs, states, vars, outputs, equations,
 * points, linear blocks, sweeps (groups in that order, items in file order). Pure.
 */
import type { Analysis } from '../pipeline/analysis';
import type { Span } from '../text';
import { maxOf, minOf } from '../arrays';
import type * as A from '../syntax/ast';
import type { ModelSymbol } from '../semantics/binder';
import { headOf, partNames } from '../semantics/elaborate';

/** The instance a flat name belongs to (`cell[2]` of `cell[2].level`; the name itself when it has no dot). */
function headOfFlat(name: string): string {
  const k = name.lastIndexOf('.');
  return k < 0 ? headOf(name) : name.slice(0, k);
}

/** A part's declarations as outline items. */
function partItems(sts: A.Statement[]): OutlineItem[] {
  const out: OutlineItem[] = [];
  for (const st of sts) {
    switch (st.kind) {
      case 'const': out.push({ name: st.name.name, kind: 'const', span: st.span, selection: st.name.span }); break;
      case 'input': case 'state': case 'var':
        for (const id of st.names) out.push({ name: id.range ? `${id.name}[…]` : id.name, kind: st.kind, detail: st.unit ? `[${st.unit.text}]` : '', span: st.span, selection: id.span });
        break;
      case 'output': out.push({ name: st.name.name, kind: 'output', detail: st.unit ? `[${st.unit.text}]` : '', span: st.span, selection: st.name.span }); break;
      case 'place': out.push({ name: st.name.name, kind: 'instance', detail: st.part.name, span: st.span, selection: st.name.span }); break;
      case 'each': for (const x of partItems(st.body)) out.push(x); break;
    }
  }
  return out;
}

export type OutlineKind = 'group' | 'const' | 'input' | 'state' | 'var' | 'output' | 'equation' | 'point' | 'pointLine' | 'linear' | 'sweep' | 'part' | 'instance';

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
  // names of the model itself, in this document: an instance's names are under its instance, a
  // family's elements under one item for the family
  const partSpans = a.source.file.statements.filter((st): st is A.PartBlock => st.kind === 'part').map((st) => st.span);
  const inPart = (sp: Span) => partSpans.some((p) => sp.start >= p.start && sp.end <= p.end);
  const shownFamilies = new Set<string>();
  const own = <T extends ModelSymbol>(list: T[]): T[] =>
    list.filter((sym) => {
      if (a.documents.foreign(sym.span) || inPart(sym.span) || a.instances.has(headOfFlat(sym.name))) return false;
      const fam = /^(.*)\[(-?\d+)\]$/.exec(sym.name);
      if (fam && a.families.has(fam[1])) {
        if (shownFamilies.has(fam[1])) return false;
        shownFamilies.add(fam[1]);
      }
      return true;
    });
  const label = (name: string) => {
    const fam = /^(.*)\[(-?\d+)\]$/.exec(name);
    const f = fam ? a.families.get(fam[1]) : undefined;
    return f ? `${f.name}[${f.from}..${f.to}]` : name;
  };
  const groups: OutlineItem[] = [];
  const group = (name: string, items: OutlineItem[]) => {
    if (!items.length) return;
    const span = { start: minOf(items.map((i) => i.span.start)), end: maxOf(items.map((i) => i.span.end)) };
    groups.push({ name, kind: 'group', span, selection: items[0].selection, detail: `${items.length}`, children: items });
  };
  const unit = (u?: { text: string }) => (u ? `[${u.text}]` : '');
  group('Constants', own(m.consts).map((s) => ({ name: label(s.name), kind: 'const', detail: oneLine(a.text.slice((s.decl as { value: { span: Span } }).value.span.start, s.decl.span.end)), span: s.decl.span, selection: s.span })));
  // lookup tables: data, listed as constants are (an editor shows them with the constant's icon)
  group('Tables', [...m.tables.values()].map((t) => ({
    name: t.name.name, kind: 'const', span: t.span, selection: t.name.span,
    detail: `${unit(t.xUnit)} → ${unit(t.yUnit)}, ${t.interpolation}${t.file ? `, from "${t.file.text}"` : `, ${t.rows.length} rows`}`,
  })));
  group('Inputs', own(m.inputs).map((s) => ({ name: label(s.name), kind: 'input', detail: unit(s.unit), span: s.decl.span, selection: s.span })));
  group('States', own(m.states).map((s) => ({ name: label(s.name), kind: 'state', detail: unit(s.unit), span: s.decl.span, selection: s.span })));
  group('Vars', own(m.vars).map((s) => ({ name: label(s.name), kind: 'var', detail: unit(s.unit), span: s.decl.span, selection: s.span })));
  group('Outputs', own(m.outputs).map((s) => ({ name: label(s.name), kind: 'output', detail: unit(s.unit), span: s.decl.span, selection: s.span })));
  // parts defined here, with their names; instances placed here, with their part and the values changed
  group('Parts', a.source.file.statements.filter((st): st is A.PartBlock => st.kind === 'part' && !!st.name.name).map((st) => ({
    name: st.name.name, kind: 'part' as const, span: st.span, selection: st.name.span, detail: `${partNames(st).size} name(s)`, children: partItems(st.body),
  })));
  group('Instances', a.source.file.statements.filter((st): st is A.PlaceStmt => st.kind === 'place').map((st) => {
    const f = a.instanceFamilies.get(st.name.name);
    const name = f ? `${st.name.name}[${f.from}..${f.to}]` : st.name.name;
    const withs = st.overrides.map((o) => o.name.name).join(', ');
    return { name, kind: 'instance' as const, span: st.span, selection: st.name.span, detail: `${st.part.name}${f ? ` ×${f.to - f.from + 1}` : ''}${withs ? ` with ${withs}` : ''}` };
  }));
  group('Equations', m.equations.filter((e) => !a.documents.foreign(e.span) && !inPart(e.span)).filter((e, k, all) => all.indexOf(e) === k && all.findIndex((x) => x.span.start === e.span.start) === k).map((e) => ({ name: oneLine(a.text.slice(e.span.start, e.span.end)), kind: 'equation', span: e.span, selection: e.eqSpan })));
  // the lines as written: a family's line (`t.level ~ 1 [m]`) stands for one line per element, all on one span
  const written = (p: A.PointBlock) => p.lines.filter((l, k, all) => all.findIndex((x) => x.span.start === l.span.start) === k);
  group('Points', m.points.filter((p) => p.name.name).map((p) => ({
    name: p.name.name, kind: 'point', span: p.span, selection: p.name.span, detail: `${written(p).length} line(s)`,
    children: written(p).map((l) => {
      // the name and the value as written (`h[2]`, `cell.level`, `{1, 2, 3} [m]`), not one element's
      const w = /^\s*(.*?)\s*[=~]\s*([^]*)$/.exec(a.documents.foreign(l.span) ? '' : a.text.slice(l.span.start, l.span.end));
      const name = w ? w[1] : l.name.name;
      const value = w ? w[2] : a.text.slice(l.value.span.start, l.value.span.end);
      return { name, kind: 'pointLine' as const, detail: `${l.mode === 'fixed' ? '=' : '~'} ${oneLine(value)}`, span: l.span, selection: l.name.span };
    }),
  })));
  group('Linear blocks', m.linears.map((l) => ({ name: l.name.name || '(unnamed)', kind: 'linear', span: l.span, selection: l.name.name ? l.name.span : l.headerSpan, detail: `${l.equations.length} equation(s)` })));
  group('Sweeps', m.sweeps.map((s) => ({ name: s.name.name || '(unnamed)', kind: 'sweep', span: s.span, selection: s.name.name ? s.name.span : s.headerSpan, detail: s.point ? `from ${s.point.name}` : undefined })));
  return groups;
}
