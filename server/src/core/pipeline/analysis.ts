/**
 * The pipeline: text → parse → bind → check units → lower → check structure, with point solving and
 * linearization on demand (cached per analysis). Pure: an analysis is of a set of documents read through
 * a SourceHost (core/sources.ts) from a root document; `analyze(text)` is the one-document shorthand.
 */
import type * as A from '../syntax/ast';
import { bind, type BoundModel } from '../semantics/binder';
import type { Diagnostic } from '../diagnostics';
import { diag } from '../diagnostics';
import { declaredValue, deviationEquations, linearize, type DeviationEquation, type LinearModel } from '../solve/linearizer';
import { lower, type LoweredModel } from '../model/model';
import { parse, type ParseResult } from '../syntax/parser';
import { elaborate, type Family } from '../semantics/elaborate';
import { solvePoint, type PointSolution } from '../solve/pointSolver';
import { sweepDiagnostics } from './sweepChecks';
import { checkStructure, type StructureResult } from '../model/structure';
import { reduceStructure, reductionSummary, type IndexPlan } from '../model/indexReduction';
import { dynamicModel, type DynamicModel } from './dynamicModel';
import { listNames } from '../model/structure';
import { LineMap } from '../text';
import { checkUnits, type UnitFacts } from '../semantics/unitChecker';
import { unitText } from '../semantics/units';
import { memoryHost, UNTITLED, type SourceHost } from '../sources';
import { pushAll } from '../arrays';
import { buildTables } from '../semantics/tables';
import type { TableSource } from '../algebra/expr';
import { checkTolerances, type ToleranceFacts } from '../semantics/tolerances';

export interface AnalyzeOptions {
  warnUnused?: boolean;
}

export interface VariableValue {
  name: string;
  kind: 'const' | 'state' | 'input' | 'var' | 'output';
  value: number; // declared unit
  unit: string;
  /** How the point treated it. */
  role: 'fixed' | 'solved' | 'constant';
}

const UNIT_ERRORS = new Set(['P302', 'P303', 'P304', 'P305', 'P306', 'P307', 'P308', 'P309']);

export class Analysis {
  readonly lines: LineMap;
  /** The syntax tree as written (with families, each blocks and reductions). */
  readonly source: ParseResult;
  /** The elaborated tree (families expanded to elements) with the syntax and elaboration diagnostics. */
  readonly parsed: ParseResult;
  /** Indexed families by name (empty for a flat model). */
  readonly families: ReadonlyMap<string, Family>;
  readonly bound: BoundModel;
  readonly units: UnitFacts;
  /** Lookup tables by name, in SI. */
  readonly tables: ReadonlyMap<string, TableSource>;
  readonly lowered: LoweredModel;
  readonly structure: StructureResult;
  /** A constrained (index above 1) model's reduction by Pantelides' algorithm; states are chosen per point. */
  readonly indexPlan: IndexPlan | undefined;
  /** Tolerance bands written on constants (`± 5 %`). */
  readonly tolerances: ToleranceFacts;
  /** Diagnostics of the static stages (syntax, names, units, structure). */
  readonly diagnostics: Diagnostic[];
  /** Whether points can be solved (no errors that make the numbers meaningless). */
  readonly canSolve: boolean;
  private readonly solved = new Map<string, PointSolution>();
  private readonly linears = new Map<string, LinearModel>();

  /**
   * The analysis of the document `uri` (whose text is `text`); `sources` is the host it was read through,
   * for the documents it refers to.
   */
  constructor(readonly text: string, readonly options: AnalyzeOptions = {}, readonly uri: string = UNTITLED, readonly sources: SourceHost = memoryHost({ [uri]: text })) {
    this.lines = new LineMap(text);
    // parse, then expand indexed families into the flat scalar model every later stage works on
    this.source = parse(text);
    const elab = elaborate(this.source.file);
    this.families = elab.families;
    this.parsed = elab.file === this.source.file ? this.source : { file: elab.file, diagnostics: [...this.source.diagnostics, ...elab.diagnostics] };
    this.bound = bind(this.parsed.file, { warnUnused: options.warnUnused, usedInIndices: elab.usedInIndices });
    this.units = checkUnits(this.bound);
    const tables = buildTables(this.bound, sources, uri); // rows in the model or CSV files beside it, read through the host
    this.tables = tables.tables;
    this.lowered = lower(this.bound, this.units, text, tables.tables);
    // a constrained model (index above 1) is reduced unless naming errors already explain the structure
    const checked = checkStructure(this.lowered);
    const reduced = this.bound.diagnostics.some((d) => d.severity === 'error') ? { structure: checked, plan: undefined } : reduceStructure(this.lowered, checked);
    this.structure = reduced.structure;
    this.indexPlan = reduced.plan;
    this.tolerances = checkTolerances(this.bound, this.units, text);
    this.diagnostics = unique([...this.parsed.diagnostics, ...this.bound.diagnostics, ...this.units.diagnostics, ...tables.diagnostics, ...this.structure.diagnostics, ...this.tolerances.diagnostics]);
    this.canSolve = this.structure.ok && !this.diagnostics.some((d) => d.severity === 'error' && !UNIT_ERRORS.has(d.code));
  }

  get pointNames(): string[] {
    return this.bound.points.map((p) => p.name.name).filter((n) => n);
  }

  pointBlock(name?: string): A.PointBlock | undefined {
    if (name === undefined) return this.bound.points.find((p) => p.name.name);
    return this.bound.points.find((p) => p.name.name === name);
  }

  /** Solves a point (the first one when no name is given); undefined when the model cannot be solved. */
  point(name?: string): PointSolution | undefined {
    const block = this.pointBlock(name);
    if (!block || !this.canSolve) return undefined;
    let s = this.solved.get(block.name.name);
    if (!s) {
      try {
        s = solvePoint(this.bound, this.lowered, block);
      } catch (e) {
        s = failed(block, e);
      }
      this.solved.set(block.name.name, s);
    }
    return s;
  }

  linear(name?: string): LinearModel | undefined {
    const sol = this.point(name);
    if (!sol || !sol.ok) return undefined;
    let l = this.linears.get(sol.name);
    if (!l) {
      const dm = this.dynamicsAt(sol.values);
      l = linearize(dm.model, dm.unknowns, dm.values, sol.name, sol.block.name.span);
      if (dm.failure) {
        const labels = dm.failure.equations.map((r) => this.lowered.equations[r]?.label ?? '?');
        l.diagnostics.push(diag('P411', sol.block.name.span, { point: sol.name, detail: dm.failure.detail, equations: labels.map((x) => `"${x}"`).join(', ') }));
      } else if (dm.selection && this.indexPlan) {
        const s = dm.selection;
        l.reduction = reductionSummary(this.indexPlan, s.stateNames, s.dummyNames, s.constrained);
        if (l.ok) l.diagnostics.push(diag('P409', sol.block.name.span, { point: sol.name, states: s.stateNames.length ? listNames(s.stateNames) : 'none (the linear model is static)', constrained: s.constrained.length ? listNames(s.constrained) : 'no declared states', dummies: listNames(s.dummyNames) }, { data: { states: s.stateNames, dummies: s.dummyNames } }));
      }
      this.linears.set(sol.name, l);
    }
    return l;
  }

  /**
   * The index-1 model to linearize or simulate at these values (SI; a point solution's values): the lowered
   * model itself, or for a constrained model its reduction with the states chosen there (`prefer`: dummy
   * slots of a previous choice, kept while they stay well-conditioned).
   */
  dynamicsAt(values: Float64Array, prefer?: readonly number[]): DynamicModel {
    return dynamicModel(this.lowered, this.structure.unknowns, this.indexPlan, values, prefer);
  }

  deviationEquations(name?: string, digits = 4): DeviationEquation[] | undefined {
    const l = this.linear(name);
    return l && l.ok ? deviationEquations(l, digits) : undefined;
  }

  /** Every variable's value at a solved point, in declared units. */
  values(sol: PointSolution): VariableValue[] {
    const out: VariableValue[] = [];
    for (const s of this.lowered.slots) {
      if (s.order !== 0) continue;
      out.push({
        name: s.name,
        kind: s.kind === 'deriv' ? 'state' : (s.kind as VariableValue['kind']),
        value: declaredValue(s, sol.values[s.id]),
        unit: unitText(s.unit.text),
        role: s.kind === 'const' ? 'constant' : sol.fixed.has(s.id) ? 'fixed' : 'solved',
      });
    }
    return out;
  }

  /**
   * Digest of the model and one point: a generated linear block is stale when it no longer matches.
   * It covers the model's text (without comments, points, linear and sweep blocks) and the lines of this
   * point that fix a value; guesses ("~") are left out, so solving a point does not make its block stale.
   */
  digest(point: string): string {
    const cut: { start: number; end: number }[] = [...this.parsed.file.comments];
    for (const st of this.parsed.file.statements) if (st.kind === 'linear' || st.kind === 'sweep' || st.kind === 'point') cut.push(st.span);
    cut.sort((a, b) => a.start - b.start);
    let s = '';
    let pos = 0;
    for (const c of cut) {
      if (c.start > pos) s += this.text.slice(pos, c.start);
      pos = Math.max(pos, c.end);
    }
    s += this.text.slice(pos);
    const block = this.pointBlock(point);
    const fixed = (block?.lines ?? [])
      .filter((l) => l.mode === 'fixed')
      .map((l) => this.text.slice(l.span.start, l.span.end).replace(/#.*$/, '').replace(/\s+/g, ''))
      .sort();
    // a table read from a file: its rows count too (a changed data sheet makes the block stale)
    const files = [...this.bound.tables.values()].filter((t) => t.file).map((t) => {
      const d = this.tables.get(t.name.name)?.table;
      return d ? `${t.name.name}:${Array.from(d.x).join(',')};${Array.from(d.y).join(',')}` : t.name.name;
    });
    s = s.replace(/\s+/g, ' ').trim() + '\u0000' + point + '\u0000' + fixed.join('\u0000');
    if (files.length) s += '\u0000' + files.join('\u0000');
    return fnv1a(s);
  }

  /** All diagnostics: static stages, every point, stale linear blocks. */
  allDiagnostics(): Diagnostic[] {
    const out = [...this.diagnostics];
    if (this.canSolve) {
      if (!this.bound.points.length && (this.lowered.stateComponents.length || this.lowered.algebraic.length)) {
        // no point yet: nothing to solve, not an error while writing
      }
      for (const p of this.bound.points) {
        if (!p.name.name) continue;
        const s = this.point(p.name.name);
        if (s) pushAll(out, s.diagnostics);
        const l = s && s.ok ? this.linear(p.name.name) : undefined;
        if (l) pushAll(out, l.diagnostics);
      }
    }
    if (this.canSolve) pushAll(out, sweepDiagnostics(this));
    for (const lb of this.bound.linears) {
      if (!lb.name.name || !this.pointBlock(lb.name.name)) continue;
      const want = this.digest(lb.name.name);
      const have = lb.digest?.text.trim();
      if (have !== want) out.push(diag('P601', lb.headerSpan, { name: lb.name.name }, { data: { point: lb.name.name } }));
    }
    return out;
  }
}

function failed(block: A.PointBlock, e: unknown): PointSolution {
  return {
    name: block.name.name, block, ok: false, values: new Float64Array(0), guesses: new Float64Array(0), unknowns: [], fixed: new Set(), iterations: 0, residual: NaN,
    diagnostics: [diag('P503', block.name.span, { point: block.name.name, detail: `internal failure (${e instanceof Error ? e.message : String(e)}); please report it.` })],
  };
}

export function fnv1a(s: string): string {
  let h = 0x811c9dc5;
  for (let i = 0; i < s.length; i++) {
    h ^= s.charCodeAt(i);
    h = Math.imul(h, 0x01000193) >>> 0;
  }
  return h.toString(16).padStart(8, '0');
}

/** The analysis of the documents read through `host`, starting at `root`; undefined when the host has no document `root`. */
export function analyzeDocuments(host: SourceHost, root: string, options: AnalyzeOptions = {}): Analysis | undefined {
  const text = host.read(root);
  return text === undefined ? undefined : new Analysis(text, options, root, host);
}

/** The analysis of one model text (an in-memory document set of that text alone). */
export function analyze(text: string, options: AnalyzeOptions = {}): Analysis {
  return analyzeDocuments(memoryHost({ [UNTITLED]: text }), UNTITLED, options)!;
}

/** Diagnostics with line/column positions (for the CLI and tests). */
export function located(a: Analysis, ds: Diagnostic[]) {
  return ds.map((d) => ({ ...d, start: a.lines.position(d.span.start), end: a.lines.position(d.span.end) }));
}

/** Diagnostics without repeats: a template line of an each block reports the same problem once. */
function unique(ds: Diagnostic[]): Diagnostic[] {
  const seen = new Set<string>();
  return ds.filter((d) => {
    const k = `${d.code}\u0000${d.span.start}\u0000${d.span.end}\u0000${d.message}`;
    if (seen.has(k)) return false;
    seen.add(k);
    return true;
  });
}
