/**
 * Binder: names → declarations. Builds the symbol table, resolves every name reference (equations,
 * outputs, constants, points, linear blocks, sweeps) and reports name errors: unknown, duplicate, unused,
 * derivative of a non-state, a state never differentiated.
 */
import type * as A from '../syntax/ast';
import { diag, type Diagnostic } from '../diagnostics';
import { BUILTIN_ARITY } from '../algebra/expr';
import { RESERVED } from '../syntax/parser';
import { leftSpine } from '../syntax/walk';
import type { Span } from '../text';
import { hasName, nameTable } from '../names';
import { conditionDiagnostics } from './conditions';
import { pushAll } from '../arrays';

export type SymbolKind = 'const' | 'input' | 'state' | 'var' | 'output';

export interface ModelSymbol {
  name: string;
  kind: SymbolKind;
  /** Span of the name in its declaration. */
  span: Span;
  /** The whole declaration statement. */
  decl: A.ConstDecl | A.VarDecl | A.OutputDecl;
  unit?: A.UnitRef;
  /** States: the highest derivative order used in equations (0 if never differentiated). */
  order: number;
  /** Declaration order within its kind. */
  index: number;
}

export interface Reference {
  span: Span; // the name itself (without Δ and primes)
  symbol: ModelSymbol;
  primes: number;
  /** `index`: in a family's size, range or index (`n` in `h[1..n]`), where only whole-number constants go. */
  where: 'equation' | 'output' | 'const' | 'point' | 'linear' | 'sweep' | 'index';
  /** Index of the statement (in file.statements) the reference sits in. */
  statement: number;
}

export interface BoundModel {
  file: A.ModelFile;
  symbols: Map<string, ModelSymbol>;
  consts: ModelSymbol[];
  inputs: ModelSymbol[];
  states: ModelSymbol[];
  vars: ModelSymbol[];
  outputs: ModelSymbol[];
  equations: A.EquationStmt[];
  points: A.PointBlock[];
  linears: A.LinearBlock[];
  sweeps: A.SweepBlock[];
  /** Lookup tables by name (called as NAME(x)). */
  tables: Map<string, A.TableDecl>;
  /** Every call of a table: the span of its name in the call. */
  tableRefs?: { span: Span; table: A.TableDecl }[];
  time?: A.TimeDecl;
  references: Reference[];
  /** Whether any unit bracket appears in the file (a file with none is nondimensional). */
  hasUnits: boolean;
  diagnostics: Diagnostic[];
}

export const BUILTIN_CONSTANTS: Readonly<Record<string, number>> = nameTable({ pi: Math.PI });

const kindWord: Record<SymbolKind, string> = { const: 'a constant', input: 'an input', state: 'a state', var: 'a var', output: 'an output' };
const kindTitle: Record<SymbolKind, string> = { const: 'Constant', input: 'Input', state: 'State', var: 'Var', output: 'Output' };

export function bind(file: A.ModelFile, options: { warnUnused?: boolean; usedInIndices?: ReadonlySet<string>; indexRefs?: readonly { name: string; span: Span }[] } = {}): BoundModel {
  const warnUnused = options.warnUnused ?? true;
  const diagnostics: Diagnostic[] = [];
  const symbols = new Map<string, ModelSymbol>();
  const m: BoundModel = {
    file, symbols, consts: [], inputs: [], states: [], vars: [], outputs: [], equations: [], points: [], linears: [], sweeps: [], tables: new Map(),
    references: [], hasUnits: false, diagnostics,
  };
  const lists: Record<SymbolKind, ModelSymbol[]> = { const: m.consts, input: m.inputs, state: m.states, var: m.vars, output: m.outputs };

  const declare = (id: A.Ident, kind: SymbolKind, decl: ModelSymbol['decl'], unit?: A.UnitRef) => {
    if (RESERVED.has(id.name) || hasName(BUILTIN_ARITY, id.name) || hasName(BUILTIN_CONSTANTS, id.name)) {
      diagnostics.push(diag('P209', id.span, { name: id.name }));
      return;
    }
    const table = m.tables.get(id.name);
    if (table) {
      diagnostics.push(diag('P243', id.span, { name: id.name, kind: 'a table' }, { related: [{ span: table.name.span, message: 'the table' }] }));
      return;
    }
    const prev = symbols.get(id.name);
    if (prev) {
      diagnostics.push(diag('P202', id.span, { name: id.name, kind: kindWord[prev.kind] }, { related: [{ span: prev.span, message: `first declared here` }] }));
      return;
    }
    const s: ModelSymbol = { name: id.name, kind, span: id.span, decl, unit, order: 0, index: lists[kind].length };
    symbols.set(id.name, s);
    lists[kind].push(s);
  };

  // Pass 1: declarations
  const pointNames = new Map<string, A.PointBlock>();
  file.statements.forEach((st) => {
    switch (st.kind) {
      case 'time':
        m.time = st;
        if (st.unit) m.hasUnits = true;
        break;
      case 'const':
        declare(st.name, 'const', st);
        break;
      case 'input':
      case 'state':
      case 'var':
        if (st.unit) m.hasUnits = true;
        for (const id of st.names) declare(id, st.kind, st, st.unit);
        break;
      case 'output':
        if (st.unit) m.hasUnits = true;
        declare(st.name, 'output', st, st.unit);
        break;
      case 'equation':
        m.equations.push(st);
        break;
      case 'point':
        if (st.name.name) {
          const prev = pointNames.get(st.name.name);
          if (prev) diagnostics.push(diag('P210', st.name.span, { name: st.name.name }, { related: [{ span: prev.name.span, message: 'first defined here' }] }));
          else pointNames.set(st.name.name, st);
        }
        m.points.push(st);
        break;
      case 'linear':
        m.linears.push(st);
        break;
      case 'sweep':
        m.sweeps.push(st);
        break;
      case 'table': {
        const id = st.name;
        const prev = symbols.get(id.name) ?? m.tables.get(id.name);
        if (RESERVED.has(id.name) || hasName(BUILTIN_ARITY, id.name) || hasName(BUILTIN_CONSTANTS, id.name)) diagnostics.push(diag('P209', id.span, { name: id.name }));
        else if (prev) diagnostics.push(diag('P243', id.span, { name: id.name, kind: 'kind' in prev && prev.kind === 'table' ? 'a table' : kindWord[(prev as ModelSymbol).kind] }, { related: [{ span: 'decl' in prev ? prev.span : prev.name.span, message: 'first declared here' }] }));
        else m.tables.set(id.name, st);
        if (st.xUnit || st.yUnit) m.hasUnits = true;
        break;
      }
    }
  });

  const used = new Set<ModelSymbol>();
  /** Calls of tables (for the unused-table warning and the editor). */
  const tableRefs: { span: Span; table: A.TableDecl }[] = [];
  m.tableRefs = tableRefs;
  const ref = (span: Span, symbol: ModelSymbol, primes: number, where: Reference['where'], statement: number) => {
    m.references.push({ span, symbol, primes, where, statement });
    if (where === 'equation' || where === 'output' || where === 'const') used.add(symbol);
  };
  // constants written in families' sizes, ranges and indices (elaboration evaluated them; no statement holds them)
  for (const r of options.indexRefs ?? []) {
    const s = symbols.get(r.name);
    if (s && s.kind === 'const') ref(r.span, s, 0, 'index', -1);
  }

  /** Walk an expression, resolving names. `allow` limits what may be referenced. */
  const walk = (e: A.Expr, where: Reference['where'], statement: number, check?: (s: ModelSymbol, n: A.NameExpr) => boolean): void => {
    switch (e.kind) {
      case 'number':
        if (e.unit) m.hasUnits = true;
        return;
      case 'error':
        return;
      case 'unary':
        return walk(e.arg, where, statement, check);
      case 'binary':
        for (const x of leftSpine(e).nodes) {
          if (x.left.kind !== 'binary') walk(x.left, where, statement, check);
          walk(x.right, where, statement, check);
        }
        return;
      case 'call': {
        const arity = hasName(BUILTIN_ARITY, e.fn) ? (BUILTIN_ARITY as Record<string, number>)[e.fn] : undefined;
        const table = arity === undefined ? m.tables.get(e.fn) : undefined;
        if (table) {
          if (e.args.length !== 1) diagnostics.push(diag('P240', e.span, { name: e.fn, got: e.args.length }));
          else tableRefs.push({ span: e.fnSpan, table });
        } else if (e.fn === 'choose') {
          if (e.args.length < 3 || e.args.length % 2 === 0) diagnostics.push(diag('P241', e.span, { got: e.args.length }));
        } else if (arity === undefined) {
          const s = symbols.get(e.fn);
          diagnostics.push(
            s
              ? diag('P101', e.fnSpan, { found: `"(" after ${kindWord[s.kind]}`, expected: 'an operator (write * for multiplication)' })
              : diag('P201', e.fnSpan, { name: e.fn }, { data: { name: e.fn, call: true } }),
          );
        } else if (arity !== e.args.length) {
          diagnostics.push(diag('P207', e.span, { fn: e.fn, expected: arity, got: e.args.length }));
        }
        for (const a of e.args) walk(a, where, statement, check);
        return;
      }
      case 'name': {
        if (e.delta && where !== 'linear') {
          diagnostics.push(diag('P111', e.span, { name: 'Δ' + e.name }));
          return;
        }
        if (hasName(BUILTIN_CONSTANTS, e.name) && !symbols.has(e.name)) {
          if (e.primes) diagnostics.push(diag('P204', e.span, { name: e.name, kind: 'a built-in constant' }));
          return;
        }
        if (hasName(BUILTIN_ARITY, e.name)) {
          diagnostics.push(diag('P206', e.nameSpan, { name: e.name }));
          return;
        }
        if (m.tables.has(e.name) && !symbols.has(e.name)) {
          diagnostics.push(diag('P242', e.nameSpan, { name: e.name }));
          return;
        }
        const s = symbols.get(e.name);
        if (!s) {
          diagnostics.push(diag('P201', e.nameSpan, { name: e.name }, { data: { name: e.name, primes: e.primes } }));
          return;
        }
        if (check && !check(s, e)) return;
        if (e.primes > 0) {
          if (s.kind !== 'state') {
            diagnostics.push(diag('P204', e.span, { name: e.name, kind: kindWord[s.kind] }, { related: [{ span: s.span, message: 'declared here' }] }));
          } else if (where === 'equation' || where === 'output') {
            s.order = Math.max(s.order, e.primes);
          }
        }
        ref(e.nameSpan, s, e.primes, where, statement);
        return;
      }
    }
  };

  file.statements.forEach((st, si) => {
    switch (st.kind) {
      case 'const': {
        const self = symbols.get(st.name.name);
        walk(st.value, 'const', si, (s, n) => {
          if (s.kind !== 'const' || (self && s.index >= self.index && s.kind === self.kind)) {
            const what = s.kind === 'const' ? 'declared later' : kindWord[s.kind];
            diagnostics.push(diag('P208', n.nameSpan, { name: st.name.name, other: n.name, kind: what }));
            return false;
          }
          return true;
        });
        break;
      }
      case 'output': {
        const self = symbols.get(st.name.name);
        walk(st.value, 'output', si, (s, n) => {
          if (s === self) {
            diagnostics.push(diag('P215', n.nameSpan, { name: s.name }));
            return false;
          }
          return true;
        });
        break;
      }
      case 'equation':
        walk(st.lhs, 'equation', si);
        walk(st.rhs, 'equation', si);
        break;
    }
  });

  // points, linear blocks, sweeps (after orders are known)
  file.statements.forEach((st, si) => {
    if (st.kind === 'point') {
      const seen = new Map<string, A.PointLine>();
      for (const l of st.lines) {
        const s = symbols.get(l.name.name);
        if (!s) {
          diagnostics.push(diag('P201', l.name.span, { name: l.name.name }, { data: { name: l.name.name } }));
        } else {
          ref(l.name.span, s, l.primes, 'point', si);
          if (l.primes > 0) diagnostics.push(diag('P216', l.span, { order: l.primes, name: l.name.name }));
          if (s.kind === 'const' && l.mode === 'guess') diagnostics.push(diag('P214', l.span, { name: s.name }));
        }
        const prev = seen.get(l.name.name);
        if (prev) diagnostics.push(diag('P211', l.name.span, { name: l.name.name, point: st.name.name }, { related: [{ span: prev.span, message: 'first listed here' }] }));
        else seen.set(l.name.name, l);
        walk(l.value, 'point', si, (s2, n) => {
          if (s2.kind !== 'const') {
            diagnostics.push(diag('P212', n.nameSpan, { name: n.name, kind: kindWord[s2.kind] }));
            return false;
          }
          used.add(s2); // a constant that gives a point its value is used (h = hmax)
          return true;
        });
      }
    } else if (st.kind === 'linear') {
      if (st.name.name && !pointNames.has(st.name.name)) diagnostics.push(diag('P213', st.name.span, { name: st.name.name }));
      for (const a of st.at) {
        const s = symbols.get(a.name.name);
        if (!s) diagnostics.push(diag('P201', a.name.span, { name: a.name.name }));
        else ref(a.name.span, s, 0, 'linear', si);
        walk(a.value, 'linear', si);
      }
      for (const eq of st.equations) {
        walk(eq.lhs, 'linear', si);
        walk(eq.rhs, 'linear', si);
      }
    } else if (st.kind === 'sweep') {
      if (st.point && !pointNames.has(st.point.name)) diagnostics.push(diag('P213', st.point.span, { name: st.point.name }));
      if (st.vary) {
        const s = symbols.get(st.vary.name.name);
        if (!s) diagnostics.push(diag('P201', st.vary.name.span, { name: st.vary.name.name }));
        else ref(st.vary.name.span, s, 0, 'sweep', si);
        walk(st.vary.from, 'sweep', si);
        walk(st.vary.to, 'sweep', si);
      }
    }
  });

  // conditions only where choose selects a case
  pushAll(diagnostics, conditionDiagnostics(file));

  // states never differentiated; unused declarations
  for (const s of m.states) {
    if (s.order === 0) diagnostics.push(diag('P205', s.span, { name: s.name }, { data: { name: s.name } }));
  }
  if (warnUnused) {
    for (const t of m.tables.values()) {
      if (!tableRefs.some((r) => r.table === t)) diagnostics.push(diag('P203', t.name.span, { kind: 'Table', name: t.name.name }, { data: { name: t.name.name } }));
    }
    for (const s of symbols.values()) {
      if (!used.has(s) && s.kind !== 'output' && !options.usedInIndices?.has(s.name)) {
        diagnostics.push(diag('P203', s.span, { kind: kindTitle[s.kind], name: s.name }, { data: { name: s.name } }));
      }
    }
  }
  return m;
}
