/**
 * The documents of an analysis: the root model and the files its `parts from "…"` lines bring in, read
 * through the SourceHost (core/sources.ts) and parsed. Each document's spans are moved into one offset
 * space — the root at 0, every other document after the one before it — so a span says by itself which
 * document it lies in (`SourceDocuments.at`), and every stage keeps working with plain spans.
 *
 * A path is relative to the folder of the file that names it. `parts from "lib/tanks.poise"` brings every
 * part of one file; `parts tank, valve from "lib"` takes each named part from its own file in a folder
 * (lib/tank.poise, lib/valve.poise). Errors (a missing file, files that bring each other in a circle, a
 * part defined twice) are reported on the line that brings the file in.
 */
import type * as A from '../syntax/ast';
import { diag, type Diagnostic } from '../diagnostics';
import { parse, type ParseResult } from '../syntax/parser';
import { LineMap, type Position, type Span } from '../text';
import type { SourceHost } from '../sources';
import type { PartDef, PartScopes } from '../semantics/elaborate';

export interface SourceDocument {
  uri: string;
  text: string;
  /** Offset of the document's first character in the analysis's offset space. */
  base: number;
  lines: LineMap;
  /** The document's syntax tree (spans already moved by `base`). */
  parsed: ParseResult;
}

/** A document and positions inside it. */
export interface DocumentRange {
  uri: string;
  start: Position;
  end: Position;
}

export class SourceDocuments {
  constructor(readonly list: readonly SourceDocument[]) {}

  get root(): SourceDocument {
    return this.list[0];
  }

  /** The document an offset lies in (the root for offsets before the first other document). */
  documentAt(offset: number): SourceDocument {
    let doc = this.list[0];
    for (const d of this.list) if (d.base <= offset) doc = d;
    return doc;
  }

  /** The document and line/character positions of a span. */
  at(span: Span): DocumentRange {
    const d = this.documentAt(span.start);
    return { uri: d.uri, start: d.lines.position(span.start - d.base), end: d.lines.position(Math.max(span.start, span.end) - d.base) };
  }

  /** Whether a span lies in another document than the root. */
  foreign(span: Span): boolean {
    return this.list.length > 1 && span.start >= this.list[1].base;
  }

  /** The source text of a span, in whichever document it lies. */
  slice(span: Span): string {
    const d = this.documentAt(span.start);
    return d.text.slice(span.start - d.base, span.end - d.base);
  }

  byUri(uri: string): SourceDocument | undefined {
    return this.list.find((d) => d.uri === uri);
  }
}

/** The parts brought in and where they come from. */
export interface LoadedParts {
  documents: SourceDocuments;
  /** Every part the model may place, by name. */
  parts: Map<string, PartDef>;
  /** Problems of the files (missing, circles, clashes; syntax errors inside them). */
  diagnostics: Diagnostic[];
  /** For each document other than the root: the span, in the root, of the parts line that brought it in first. */
  broughtBy: Map<string, Span>;
  /** Where each document's place lines look parts up: its own parts and the ones its parts lines name. */
  scopes: PartScopes;
}

/** `rel` resolved against the folder of `base` ('/' separated; `..` and `.` folded). Pure: no file system. */
export function resolvePath(base: string, rel: string): string {
  const r = rel.replace(/\\/g, '/');
  if (/^[a-z][a-z0-9+.-]*:/i.test(r) || r.startsWith('/')) return r;
  const slash = Math.max(base.lastIndexOf('/'), base.lastIndexOf('\\'));
  const dir = slash >= 0 ? base.slice(0, slash + 1) : '';
  const sep = base.includes('\\') && !base.includes('/') ? '\\' : '/';
  // keep the scheme and authority (file:///) untouched
  const m = /^([a-z][a-z0-9+.-]*:(\/\/[^/]*)?)(.*)$/i.exec(dir);
  const head = m ? m[1] : '';
  const path = (m ? m[3] : dir).split(/[\\/]/);
  path.pop(); // the empty piece after the last separator
  for (const piece of r.split('/')) {
    if (piece === '' || piece === '.') continue;
    if (piece === '..' && path.length && path[path.length - 1] !== '..' && path[path.length - 1] !== '') path.pop();
    else path.push(piece);
  }
  return head + path.join(sep);
}

/** Moves every span of a tree by `by` (each span object once; iterative: trees may be deep). */
export function shiftSpans(root: unknown, by: number): void {
  if (by === 0) return;
  const seen = new Set<object>();
  const stack: unknown[] = [root];
  while (stack.length) {
    const x = stack.pop();
    if (!x || typeof x !== 'object' || seen.has(x)) continue;
    seen.add(x);
    if (Array.isArray(x)) {
      for (const v of x) if (v && typeof v === 'object') stack.push(v);
      continue;
    }
    const o = x as Record<string, unknown>;
    if (typeof o.start === 'number' && typeof o.end === 'number' && !('line' in o)) {
      o.start += by;
      o.end += by;
    }
    for (const k in o) {
      const v = o[k];
      if (v && typeof v === 'object') stack.push(v);
    }
  }
}

const fileName = (uri: string) => uri.slice(Math.max(uri.lastIndexOf('/'), uri.lastIndexOf('\\')) + 1);

/**
 * Reads the files a model's `parts from` lines bring in (and theirs, in turn), through the host, and
 * collects the parts. The root document is `rootUri` with its tree `root`.
 */
export function loadParts(host: SourceHost, rootUri: string, rootText: string, root: ParseResult): LoadedParts {
  const docs: SourceDocument[] = [{ uri: rootUri, text: rootText, base: 0, lines: new LineMap(rootText), parsed: root }];
  const diagnostics: Diagnostic[] = [];
  const parts = new Map<string, PartDef>();
  const broughtBy = new Map<string, Span>();
  const location = (def: PartDef): string => {
    const d = docs.find((x) => x.uri === def.uri)!;
    return `${fileName(def.uri)} line ${d.lines.position(def.block.name.span.start - d.base).line + 1}`;
  };
  const byUri = new Map<string, Map<string, PartDef>>();
  /** The file-form parts lines with names of each document, and the document each brought in. */
  const namedLines = new Map<string, { st: A.PartsFrom; uri: string }[]>();
  /** Makes the parts of `doc` (only those in `only`, when given) placeable in the document `into`. */
  const addParts = (into: string, doc: SourceDocument, only?: ReadonlySet<string>, at?: A.PartsFrom): void => {
    let scope = byUri.get(into);
    if (!scope) byUri.set(into, (scope = new Map()));
    for (const st of doc.parsed.file.statements) {
      if (st.kind !== 'part' || !st.name.name || (only && !only.has(st.name.name))) continue;
      const prev = scope.get(st.name.name);
      if (prev && prev.block === st) continue;
      if (prev) {
        diagnostics.push(diag('P257', at ? at.path.span : st.name.span, { name: st.name.name, first: location(prev), second: location({ block: st, uri: doc.uri }) }, {
          related: [{ span: prev.block.name.span, message: `part ${st.name.name} first defined here` }, { span: st.name.span, message: `and again here` }],
        }));
        continue;
      }
      const def = { block: st, uri: doc.uri };
      scope.set(st.name.name, def);
      if (!parts.has(st.name.name)) parts.set(st.name.name, def);
    }
  };
  addParts(rootUri, docs[0]);

  const open = (uri: string): SourceDocument | undefined => {
    const had = docs.find((d) => d.uri === uri);
    if (had) return had;
    const text = host.read(uri);
    if (text === undefined) return undefined;
    const last = docs[docs.length - 1];
    const base = last.base + last.text.length + 1;
    const parsed = parse(text);
    shiftSpans(parsed, base);
    const doc: SourceDocument = { uri, text, base, lines: new LineMap(text), parsed };
    docs.push(doc);
    for (const d of parsed.diagnostics) diagnostics.push(d);
    addParts(uri, doc); // a file's parts may place one another
    return doc;
  };

  /** Follows the parts lines of `doc`; `chain` is the files on the way here (a circle comes back to one). */
  const follow = (doc: SourceDocument, chain: string[], rootLine: Span | undefined): void => {
    for (const st of doc.parsed.file.statements) {
      if (st.kind !== 'parts') continue;
      const line = rootLine ?? st.span;
      const folder = !/\.poise$/i.test(st.path.text);
      if (folder && !st.names.length) {
        diagnostics.push(diag('P259', st.path.span, { path: st.path.text }));
        continue;
      }
      const targets = folder ? st.names.map((n) => ({ uri: resolvePath(doc.uri, `${st.path.text.replace(/[\\/]+$/, '')}/${n.name}.poise`), names: [n] })) : [{ uri: resolvePath(doc.uri, st.path.text), names: st.names }];
      for (const t of targets) {
        if (chain.includes(t.uri)) {
          diagnostics.push(diag('P256', st.path.span, { chain: [...chain, t.uri].map(fileName).join(' → ') }));
          continue;
        }
        const known = docs.some((d) => d.uri === t.uri);
        const d = open(t.uri);
        if (!d) {
          // a part of a folder that has no file: on the part's name; a file: on the path
          diagnostics.push(diag('P255', folder ? t.names[0].span : st.path.span, { path: folder ? `${st.path.text}/${t.names[0].name}.poise` : st.path.text, resolved: t.uri }));
          continue;
        }
        if (!broughtBy.has(d.uri)) broughtBy.set(d.uri, line);
        const defined = new Set(d.parsed.file.statements.filter((x): x is A.PartBlock => x.kind === 'part').map((x) => x.name.name));
        for (const n of t.names) {
          if (!defined.has(n.name)) {
            const list = [...defined];
            diagnostics.push(diag('P258', n.span, { file: fileName(d.uri), name: n.name, advice: list.length ? `its parts are ${list.join(', ')}` : 'it defines no part' }));
          }
        }
        // a parts line with names brings in those parts only (a named part still places its neighbours: the
        // file's own scope); without names every part the file defines
        addParts(doc.uri, d, st.names.length ? new Set(t.names.map((n) => n.name)) : undefined, st);
        if (st.names.length && !folder) namedLines.set(doc.uri, [...(namedLines.get(doc.uri) ?? []), { st, uri: d.uri }]);
        if (!known) follow(d, [...chain, d.uri], line);
      }
    }
  };
  follow(docs[0], [rootUri], undefined);
  const hidden = (uri: string, name: A.Ident): Diagnostic | undefined => {
    const def = docs.find((d) => d.parsed.file.statements.some((x) => x.kind === 'part' && x.name.name === name.name));
    if (!def) return undefined;
    const line = (namedLines.get(uri) ?? []).find((l) => l.uri === def.uri);
    const here = docs.find((d) => d.uri === uri);
    const foreign = here !== docs[0];
    let fix: string;
    let why: string;
    let data: Record<string, unknown>;
    if (line) {
      const names = line.st.names.map((n) => n.name);
      fix = `parts ${[...names, name.name].join(', ')} from "${line.st.path.text}"`;
      why = `its parts line names only ${names.join(', ')}`;
      data = { part: name.name, replace: line.st.span, text: fix };
    } else {
      fix = `parts ${name.name} from "${relativePath(uri, def.uri)}"`;
      why = 'no parts line of this file names it';
      data = { part: name.name, after: here?.parsed.file.statements.filter((x) => x.kind === 'parts').pop()?.span, text: fix };
    }
    return diag('P262', name.span, { name: name.name, file: fileName(def.uri), why, fix }, { data: foreign ? { part: name.name } : data });
  };
  return { documents: new SourceDocuments(docs), parts, diagnostics, broughtBy, scopes: { root: rootUri, byUri, hidden } };
}

/** The path of `to` relative to the folder of `from` ('/' separated), as a parts line writes it. */
export function relativePath(from: string, to: string): string {
  const split = (u: string) => u.replace(/\\/g, '/').split('/');
  const a = split(from);
  a.pop();
  const b = split(to);
  let k = 0;
  while (k < a.length && k < b.length - 1 && a[k] === b[k]) k++;
  return [...a.slice(k).map(() => '..'), ...b.slice(k)].join('/');
}
