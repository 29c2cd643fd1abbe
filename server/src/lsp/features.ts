/**
 * The language features: each LSP request mapped onto a pure service of the core (server/src/core/services)
 * and converted to protocol data, every handler inside the request guard (guard.ts) with its parameters
 * checked at the edge (params.ts). Work that needs solved points goes through `Analyses.compute`, which
 * runs it inline for a quick model and in the worker for a slow one.
 */
import {
  CodeActionKind, MessageType, ResponseError, SemanticTokensBuilder, ShowMessageNotification,
  type CancellationToken, type ClientCapabilities, type CodeAction, type CodeLens, type Connection,
  type TextEdit as LspTextEdit, type WorkspaceEdit,
} from 'vscode-languageserver/node';
import type { TextDocument } from 'vscode-languageserver-textdocument';
import { catalogueText } from '../core/diagnostics';
import type { Analysis } from '../core/pipeline/analysis';
import { completions } from '../core/services/completion';
import type { TextEdit } from '../core/services/edits';
import { foldingRanges } from '../core/services/folding';
import { sweepLenses } from '../core/services/lenses';
import { pointAt } from '../core/services/locate';
import { definition, prepareRename, references, rename } from '../core/services/navigation';
import { memberAt, memberOccurrences } from '../core/services/partMembers';
import { quickFixes, type DiagnosticRef } from '../core/services/quickFixes';
import { TOKEN_MODIFIERS, TOKEN_TYPES, semanticTokens } from '../core/services/semanticTokens';
import { documentOutline } from '../core/services/symbols';
import type { Analyses, OpenDocument } from './analyses';
import { toCompletionItem, toDocumentSymbol, toLocation, toRange, toSpan, toTextEdit, type DiagnosticData } from './convert';
import { ErrorCode, guard, type LogError } from './guard';
import { fileName, type PointEdit } from './jobs';
import * as P from './params';
import { LINEARIZE_COMMAND, REPORT_COMMAND, SOLVE_COMMAND, SWEEP_COMMAND } from './requests';
import { sampledHoverSection, type ToleranceSamples } from './tolerances';

/** The Solve and Linearize operations as code actions (kinds under `source`), for editors without code lenses. */
export const SOLVE_ACTION = 'source.poise.solvePoint';
export const LINEARIZE_ACTION = 'source.poise.linearizePoint';

export const SEMANTIC_LEGEND = { tokenTypes: [...TOKEN_TYPES], tokenModifiers: [...TOKEN_MODIFIERS] };

export interface FeatureContext {
  connection: Connection;
  analyses: Analyses;
  caps: () => ClientCapabilities;
  /** Whether the client implements the Report, Sweep… and Run sweep commands. */
  clientCommands: () => boolean;
  log: (m: string) => void;
  logError: LogError;
  /** Tolerance samples in worker threads, for the hovers of toleranced constants and points. */
  samples?: ToleranceSamples;
}

export function registerFeatures(x: FeatureContext): void {
  const { connection: c, analyses } = x;
  const on = <P, R>(method: string, check: P.Check<P>, fn: (p: P, token: CancellationToken) => R | Promise<R>) => guard(method, check, fn, x.logError);
  const open = (uri: string) => analyses.open(uri);
  const offset = (d: OpenDocument, p: { line: number; character: number }) => d.a.lines.offset(p);

  const workspaceEdit = (doc: TextDocument, a: Analysis, edits: readonly TextEdit[]): WorkspaceEdit => {
    const lsp: LspTextEdit[] = edits.map((e) => toTextEdit(a, e));
    if (x.caps().workspace?.workspaceEdit?.documentChanges) {
      return { documentChanges: [{ textDocument: { uri: doc.uri, version: doc.version }, edits: lsp }] };
    }
    return { changes: { [doc.uri]: lsp } };
  };

  c.onHover(on('textDocument/hover', P.positionParams, async (p, token) => {
    const d = open(p.textDocument.uri);
    if (!d) return null;
    const at = offset(d, p.position);
    const h = await analyses.compute(d, { kind: 'hover', offset: at, digits: d.s.digits, activePoint: d.s.activePoint }, token);
    if (!h) return null;
    const sampled = x.samples ? await sampledHoverSection(x.samples, analyses, d, at, token) : undefined;
    return { contents: { kind: 'markdown' as const, value: sampled ? `${h.markdown}\n\n---\n\n${sampled}` : h.markdown }, range: toRange(d.a, h.span) };
  }));

  c.onCompletion(on('textDocument/completion', P.positionParams, (p) => {
    const d = open(p.textDocument.uri);
    if (!d) return { isIncomplete: false, items: [] };
    const snippets = !!x.caps().textDocument?.completion?.completionItem?.snippetSupport;
    return { isIncomplete: false, items: completions(d.a, offset(d, p.position)).map((i) => toCompletionItem(d.a, i, snippets)) };
  }));

  c.onDefinition(on('textDocument/definition', P.positionParams, (p) => {
    const d = open(p.textDocument.uri);
    return d ? definition(d.a, offset(d, p.position)).map((s) => toLocation(d.a, s)) : [];
  }));

  c.onReferences(on('textDocument/references', P.referenceParams, (p) => {
    const d = open(p.textDocument.uri);
    if (!d) return [];
    const at = offset(d, p.position);
    const out = references(d.a, at, p.context.includeDeclaration).map((s) => toLocation(d.a, s));
    const member = memberAt(d.a, at);
    if (member) {
      // the other open models that place the part
      const seen = new Set(out.map((l) => JSON.stringify(l)));
      for (const u of analyses.usersOf(member.part.uri)) {
        const other = open(u);
        const part = other?.a.parts.get(member.part.block.name.name);
        if (!other || !part || part.uri !== member.part.uri) continue;
        for (const span of memberOccurrences(other.a, { part, name: member.name }, p.context.includeDeclaration)) {
          const loc = toLocation(other.a, span);
          const key = JSON.stringify(loc);
          if (!seen.has(key)) {
            seen.add(key);
            out.push(loc);
          }
        }
      }
    }
    return out;
  }));

  c.onPrepareRename(on('textDocument/prepareRename', P.positionParams, (p) => {
    const d = open(p.textDocument.uri);
    const r = d && prepareRename(d.a, offset(d, p.position));
    return d && r ? { range: toRange(d.a, r.span), placeholder: r.placeholder } : null;
  }));

  c.onRenameRequest(on('textDocument/rename', P.renameParams, (p) => {
    const d = open(p.textDocument.uri);
    if (!d) return null;
    const at = offset(d, p.position);
    const r = rename(d.a, at, p.newName);
    if (!r.ok) throw new ResponseError(ErrorCode.InvalidParams, r.message);
    const member = memberAt(d.a, at);
    if (!member && !r.edits.some((e) => d.a.documents.foreign(e.span))) return workspaceEdit(d.doc, d.a, r.edits);
    // a name of a part: every document it is written in, and the other open models that place the part
    const byUri = new Map<string, Map<string, LspTextEdit>>();
    const put = (loc: { uri: string; range: P.Range }, newText: string) => {
      const m = byUri.get(loc.uri) ?? new Map<string, LspTextEdit>();
      m.set(JSON.stringify(loc.range), { range: loc.range, newText });
      byUri.set(loc.uri, m);
    };
    for (const e of r.edits) put(toLocation(d.a, e.span), e.newText);
    if (member) {
      const partUri = member.part.uri;
      for (const u of analyses.usersOf(partUri)) {
        const other = open(u);
        const part = other?.a.parts.get(member.part.block.name.name);
        if (!other || !part || part.uri !== partUri) continue;
        for (const span of memberOccurrences(other.a, { part, name: member.name })) {
          const loc = toLocation(other.a, span);
          if (loc.uri !== partUri || !byUri.has(partUri)) put(loc, p.newName);
        }
      }
    }
    if (x.caps().workspace?.workspaceEdit?.documentChanges) {
      return { documentChanges: [...byUri].map(([uri, m]) => ({ textDocument: { uri, version: analyses.documents.get(uri)?.version ?? null }, edits: [...m.values()] })) };
    }
    return { changes: Object.fromEntries([...byUri].map(([uri, m]) => [uri, [...m.values()]])) };
  }));

  c.onDocumentSymbol(on('textDocument/documentSymbol', P.documentParams, (p) => {
    const d = open(p.textDocument.uri);
    return d ? documentOutline(d.a).map((o) => toDocumentSymbol(d.a, o)) : [];
  }));

  c.onFoldingRanges(on('textDocument/foldingRange', P.documentParams, (p) => {
    const d = open(p.textDocument.uri);
    return d ? foldingRanges(d.a).map((f) => ({ startLine: f.startLine, endLine: f.endLine, kind: f.kind })) : [];
  }));

  c.languages.semanticTokens.on(on('textDocument/semanticTokens/full', P.documentParams, (p) => {
    const d = open(p.textDocument.uri);
    if (!d) return { data: [] };
    const b = new SemanticTokensBuilder();
    for (const t of semanticTokens(d.a)) {
      const pos = d.a.lines.position(t.span.start);
      let mods = 0;
      for (const m of t.modifiers) mods |= 1 << TOKEN_MODIFIERS.indexOf(m);
      b.push(pos.line, pos.character, t.span.end - t.span.start, TOKEN_TYPES.indexOf(t.type), mods);
    }
    return b.build();
  }));

  c.onCodeLens(on('textDocument/codeLens', P.documentParams, async (p, token) => {
    const d = open(p.textDocument.uri);
    if (!d) return [];
    const uri = d.doc.uri;
    const out: CodeLens[] = [];
    const client = x.clientCommands();
    for (const l of await analyses.compute(d, { kind: 'lenses', digits: d.s.digits }, token)) {
      const start = d.a.lines.position(l.span.start);
      const range = { start, end: start };
      const args = [uri, l.point];
      out.push({ range, command: { title: l.solve.title, command: SOLVE_COMMAND, arguments: args } });
      out.push({ range, command: { title: l.linearize.title, command: LINEARIZE_COMMAND, arguments: args } });
      if (!client) continue;
      out.push({ range, command: { title: l.report.title, command: REPORT_COMMAND, arguments: args } });
      out.push({ range, command: { title: l.sweep.title, command: SWEEP_COMMAND, arguments: args } });
    }
    if (!client) return out;
    // above each declared sweep block: run it as declared (the client skips its dialog given a spec)
    for (const l of sweepLenses(d.a)) {
      const start = d.a.lines.position(l.span.start);
      const range = { start, end: start };
      out.push(l.spec
        ? { range, command: { title: l.title, command: SWEEP_COMMAND, arguments: [uri, l.point, l.spec] } }
        : { range, command: { title: l.title, tooltip: l.problem, command: '' } });
    }
    return out;
  }));

  c.onCodeAction(on('textDocument/codeAction', P.codeActionParams, async (p, token) => {
    const d = open(p.textDocument.uri);
    if (!d) return [];
    const only = p.context.only;
    const wanted = (kind: string) => !only || only.some((k) => kind === k || kind.startsWith(k + '.'));
    const out: CodeAction[] = [];
    if (wanted(CodeActionKind.QuickFix)) {
      type Ref = DiagnosticRef & { lsp: (typeof p.context.diagnostics)[number] };
      const refs: Ref[] = [];
      for (const lsp of p.context.diagnostics) {
        if (lsp.source !== 'poise' || typeof lsp.code !== 'string') continue;
        refs.push({ code: lsp.code, span: toSpan(d.a, lsp.range as P.Range), data: (lsp.data as DiagnosticData | undefined)?.core, lsp });
      }
      for (const f of quickFixes(d.a, refs, d.s.digits)) {
        out.push({ title: f.title, kind: CodeActionKind.QuickFix, diagnostics: [(f.diagnostic as Ref).lsp as never], isPreferred: f.isPreferred, edit: workspaceEdit(d.doc, d.a, f.edits) });
      }
    }
    // Solve and Linearize as source actions too, for editors without code lenses (Helix, …): with their
    // edit for a quick model; for a slow one as the command, so nothing is solved until it is chosen
    const point = pointAt(d.a, d.a.lines.offset(p.range.start));
    for (const [kind, action, command] of [[SOLVE_ACTION, 'solve', SOLVE_COMMAND], [LINEARIZE_ACTION, 'linearize', LINEARIZE_COMMAND]] as const) {
      if (!point || !wanted(kind)) continue;
      if (analyses.slow(d)) {
        const title = catalogueText(action === 'solve' ? 'P706' : 'P707', { point });
        out.push({ title, kind, command: { title, command, arguments: [d.doc.uri, point] } });
        continue;
      }
      const r = await analyses.compute(d, { kind: 'pointEdit', action, point, digits: d.s.digits }, token);
      if (r.ok && r.edits.length) out.push({ title: r.label, kind, edit: workspaceEdit(d.doc, d.a, r.edits) });
    }
    return out;
  }));

  // Solve / Linearize at a point: the lenses' command, with arguments [uri, point]
  c.onExecuteCommand(on('workspace/executeCommand', P.executeCommandParams, async (p, token) => {
    if (p.command !== SOLVE_COMMAND && p.command !== LINEARIZE_COMMAND) return null;
    const action = p.command === SOLVE_COMMAND ? 'solve' : 'linearize';
    const [uri, pointArg] = p.arguments;
    const fail = (message: string) => {
      void c.sendNotification(ShowMessageNotification.type, { type: MessageType.Error, message: `Poise: ${message}` });
      return { applied: false, message };
    };
    if (typeof uri !== 'string' || !analyses.documents.get(uri)) return fail(catalogueText('P801', { file: typeof uri === 'string' ? fileName(uri) : 'the model file' }));
    await analyses.settings.for(uri);
    const d = open(uri)!;
    const point = typeof pointArg === 'string' && pointArg ? pointArg : d.a.pointNames[0];
    if (!point) return fail(catalogueText('P802', { file: fileName(uri) }));
    const r: PointEdit = await analyses.compute(d, { kind: 'pointEdit', action, point, digits: d.s.digits }, token);
    if (!r.ok) return fail(r.message);
    if (!r.edits.length) return { applied: true, edits: 0 };
    const res = await c.workspace.applyEdit({ label: r.label, edit: workspaceEdit(d.doc, d.a, r.edits) });
    if (!res.applied) x.log(catalogueText('P813', { label: r.label, reason: res.failureReason ? ` (${res.failureReason})` : '' }));
    return { applied: res.applied, edits: r.edits.length };
  }));
}
