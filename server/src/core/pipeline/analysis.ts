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
import { elaborate, type ElaborationResult, type Family, type PartDef, type PartScopes } from '../semantics/elaborate';
import { loadParts, SourceDocuments } from './documents';
import { explainMembers } from './memberNames';
import { solvePoint, type PointSolution } from '../solve/pointSolver';
import { sweepDiagnostics } from './sweepChecks';
import { checkStructure, type StructureResult } from '../model/structure';
import { reduceStructure, reductionSummary, type IndexPlan } from '../model/indexReduction';
import { dynamicModel, type DynamicModel } from './dynamicModel';
import { listNames } from '../model/structure';
import { LineMap } from '../text';
import { checkUnits, type UnitFacts } from '../semantics/unitChecker';
import { unitText } from '../semantics/units';
import { layeredHost, memoryHost, UNTITLED, type SourceHost } from '../sources';
import { pushAll } from '../arrays';
import { buildTables } from '../semantics/tables';
import type { TableSource } from '../algebra/expr';
import { checkTolerances, type ToleranceFacts } from '../semantics/tolerances';

export interface AnalyzeOptions {
  warnUnused?: boolean;
}

/** An edited text of an analysed document whose statements are the analysed ones, moved: `map` takes an offset of the analysed text to the edited one. */
export interface EditedText {
  text: string;
  map(offset: number): number;
  /** The comments of the edited text. */
  comments: readonly { start: number; end: number }[];
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
  /** The root document and the files its `parts from` lines bring in (spans of each in one offset space). */
  readonly documents: SourceDocuments;
  /** The parts the model may place (its own and those brought in). */
  readonly parts: ReadonlyMap<string, PartDef>;
  /** Placed instances and families of instances. */
  readonly instances: ElaborationResult['instances'];
  readonly instanceFamilies: ElaborationResult['instanceFamilies'];
  /** For each other document: the parts line of the root that brought it in. */
  readonly broughtBy: ReadonlyMap<string, { start: number; end: number }>;
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
    // the files that `parts from` lines bring in, then families and parts expanded into the flat scalar model
    const loaded = loadParts(sources, uri, text, this.source);
    this.documents = loaded.documents;
    this.parts = loaded.parts;
    this.broughtBy = loaded.broughtBy;
    const elab = elaborate(this.source.file, loaded.parts, loaded.scopes);
    this.families = elab.families;
    this.instances = elab.instances;
    this.instanceFamilies = elab.instanceFamilies;
    const before = [...this.source.diagnostics, ...loaded.diagnostics, ...elab.diagnostics, ...checkUnplacedParts(this.source.file, loaded.parts, elab, options, loaded.scopes)];
    this.parsed = elab.file === this.source.file && before.length === this.source.diagnostics.length ? this.source : { file: elab.file, diagnostics: before };
    this.bound = bind(this.parsed.file, { warnUnused: options.warnUnused, usedInIndices: elab.usedInIndices, indexRefs: elab.indexRefs });
    this.units = checkUnits(this.bound);
    // spans of every document in one offset space: the texts of the files brought in follow the root's
    const allText = this.documents.list.length > 1 ? this.documents.list.map((d) => d.text).join('\n') : text;
    const tables = buildTables(this.bound, sources, uri); // rows in the model or CSV files beside it, read through the host
    this.tables = tables.tables;
    this.lowered = lower(this.bound, this.units, allText, tables.tables);
    // a constrained model (index above 1) is reduced unless naming errors already explain the structure
    const checked = checkStructure(this.lowered);
    const reduced = this.bound.diagnostics.some((d) => d.severity === 'error') ? { structure: checked, plan: undefined } : reduceStructure(this.lowered, checked);
    this.structure = reduced.structure;
    this.indexPlan = reduced.plan;
    this.tolerances = checkTolerances(this.bound, this.units, allText);
    this.diagnostics = this.attribute(unique([...this.parsed.diagnostics, ...explainMembers(this.bound.diagnostics, this.instances, (sp) => this.documents.slice(sp)), ...this.units.diagnostics, ...tables.diagnostics, ...this.structure.diagnostics, ...this.tolerances.diagnostics]));
    this.canSolve = this.structure.ok && !this.diagnostics.some((d) => d.severity === 'error' && !UNIT_ERRORS.has(d.code));
  }

  /**
   * Diagnostics of a part's lines are said once (every instance made from a line shares its span); one that
   * names an instance (`t1.inflow` has no equation) is a problem of that use: it moves to the place line,
   * with the part's line as related information.
   */
  attribute(ds: Diagnostic[]): Diagnostic[] {
    if (!this.instances.size) return ds;
    const blocks = [...this.parts.values()].map((p) => p.block.span);
    const inPart = (sp: { start: number; end: number }) => blocks.some((b) => sp.start >= b.start && sp.end <= b.end);
    const top = [...this.instances.values()].filter((i) => !inPart(i.span));
    const out: Diagnostic[] = [];
    const seen = new Set<string>();
    for (const d of ds) {
      if (!inPart(d.span)) {
        out.push(d);
        continue;
      }
      let use: (typeof top)[number] | undefined;
      if (/^P[456]/.test(d.code)) {
        for (const i of top) {
          const k = d.message.indexOf(`${i.name}.`);
          if (k >= 0 && (k === 0 || !/[\p{L}\p{N}_.\]]/u.test(d.message[k - 1])) && (!use || i.name.length > use.name.length)) use = i;
        }
      }
      if (use) {
        const part = use.part.block.name.name;
        out.push({ ...d, span: use.place.name.span, related: [{ span: d.span, message: `in part ${part}` }, ...(d.related ?? [])] });
        continue;
      }
      const key = `${d.code}\u0000${d.span.start}\u0000${d.span.end}`;
      if (seen.has(key)) continue;
      seen.add(key);
      out.push(d);
    }
    return out;
  }

  /** The analysis of another text of the same document, read with the same host (for the files it brings in). */
  withText(text: string, options: AnalyzeOptions = this.options): Analysis {
    return new Analysis(text, options, this.uri, layeredHost(memoryHost({ [this.uri]: text }), this.sources));
  }

  /** The document and line/character positions of a span (of the root or of a file brought in). */
  where(span: { start: number; end: number }) {
    return this.documents.at(span);
  }

  /** The source text of a span, in whichever document it lies. */
  sourceText(span: { start: number; end: number }): string {
    return this.documents.slice(span);
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
   * `edited`: the digest of an edited text whose statements are those of this analysis with their spans
   * moved (services/valueEdit.ts), without analysing it again.
   */
  digest(point: string, edited?: EditedText): string {
    const text = edited?.text ?? this.text;
    const at = edited ? (sp: { start: number; end: number }) => ({ start: edited.map(sp.start), end: edited.map(sp.end) }) : (sp: { start: number; end: number }) => sp;
    const cut: { start: number; end: number }[] = [...(edited?.comments ?? this.parsed.file.comments)];
    for (const st of this.parsed.file.statements) if (st.kind === 'linear' || st.kind === 'sweep' || st.kind === 'point') cut.push(at(st.span));
    cut.sort((a, b) => a.start - b.start);
    let s = '';
    let pos = 0;
    for (const c of cut) {
      if (c.start > pos) s += text.slice(pos, c.start);
      pos = Math.max(pos, c.end);
    }
    s += text.slice(pos);
    const block = this.pointBlock(point);
    const fixed = (block?.lines ?? [])
      .filter((l) => l.mode === 'fixed')
      .map((l) => at(l.span))
      .map((sp) => text.slice(sp.start, sp.end).replace(/#.*$/, '').replace(/\s+/g, ''))
      .sort();
    // a table read from a file: its rows count too (a changed data sheet makes the block stale)
    const files = [...this.bound.tables.values()].filter((t) => t.file).map((t) => {
      const d = this.tables.get(t.name.name)?.table;
      return d ? `${t.name.name}:${Array.from(d.x).join(',')};${Array.from(d.y).join(',')}` : t.name.name;
    });
    // the files of the parts it places are part of the model
    for (const d of this.documents.list.slice(1)) s += '\u0000' + d.text;
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
        if (s) pushAll(out, this.attribute(s.diagnostics));
        const l = s && s.ok ? this.linear(p.name.name) : undefined;
        if (l) pushAll(out, this.attribute(l.diagnostics));
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

/**
 * A part that nothing places (a library file opened on its own, a part just written) is still checked: its
 * lines as a model of their own, for names and units (not for balance: its inputs are tied where it is used).
 */
function checkUnplacedParts(file: A.ModelFile, parts: ReadonlyMap<string, PartDef>, elab: ElaborationResult, options: AnalyzeOptions, scopes: PartScopes): Diagnostic[] {
  const out: Diagnostic[] = [];
  const placed = new Set([...elab.instances.values()].map((i) => i.part.block));
  for (const st of file.statements) {
    if (st.kind !== 'part' || !st.name.name || placed.has(st) || parts.get(st.name.name)?.block !== st) continue;
    const place: A.PlaceStmt = { kind: 'place', part: st.name, name: { name: '', span: st.name.span }, overrides: [], span: st.headerSpan };
    const e = elaborate({ statements: [place], comments: [], length: file.length }, parts, scopes);
    const b = bind(e.file, { warnUnused: options.warnUnused, usedInIndices: e.usedInIndices, indexRefs: e.indexRefs });
    const u = checkUnits(b);
    for (const d of [...e.diagnostics, ...b.diagnostics, ...u.diagnostics]) {
      if (d.code === 'P205' || d.code === 'P405' || d.span.start < st.span.start || d.span.end > st.span.end) continue;
      out.push(d);
    }
  }
  return out;
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
  return ds.map((d) => {
    const w = a.where(d.span);
    return { ...d, uri: w.uri, start: w.start, end: w.end };
  });
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
