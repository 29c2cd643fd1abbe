/**
 * The Poise language server: a thin shell around the pure analysis core. Every fact comes from an
 * `Analysis` (documents read through the server's source host, sourceHost.ts) and the services in
 * server/src/core/services/; this file keeps the open documents, caches one Analysis per URI and version, converts offsets ↔ positions and data ↔ protocol messages, and guards
 * every handler (`runSafe`) so that one failure is logged and answered with a neutral result.
 *
 * Transport: `createConnection(ProposedFeatures.all)` reads the command line, so the same entry serves
 * `--stdio` (any LSP editor: `npx poise lsp --stdio`) and `--node-ipc` (the VS Code client).
 *
 * Adding a custom request (poise/report, poise/sweep, poise/export, …) from another module:
 *
 *     import { registerRequest } from '../lsp/registry';      // or from '../lsp/server'
 *     registerRequest('poise/report', async (params: { uri: string; point: string }, ctx) => {
 *       const a = ctx.analysis(params.uri);          // Analysis of the open document, or undefined
 *       const { digits } = await ctx.settings(params.uri);
 *       if (!a) throw new Error('the document is not open');   // becomes a JSON-RPC error response
 *       return { html: '…' };
 *     });
 *
 * and import that module from server/src/lsp/extensions.ts (so both entry points load it). Registration
 * works before or after startServer(); `getServerContext()` gives the same context outside a request.
 *
 * Initialization options (all optional): `debounceMs` (number) — delay between the last edit and the
 * diagnostics run (default 30 ms); `timing` (boolean) — log the time of each diagnostics run;
 * `clientCommands: false` — leave out the Report, Sweep… and Run sweep lenses, whose commands only the
 * VS Code extension implements.
 */
import {
  CodeActionKind, DidChangeConfigurationNotification, MessageType, ProposedFeatures, ShowMessageNotification, ResponseError, SemanticTokensBuilder, TextDocumentSyncKind, TextDocuments,
  createConnection,
  type CancellationToken, type ClientCapabilities, type CodeAction, type CodeLens, type Connection, type InitializeResult,
  type TextEdit as LspTextEdit, type WorkspaceEdit,
} from 'vscode-languageserver/node';
import { TextDocument } from 'vscode-languageserver-textdocument';
import { Analysis } from '../core/pipeline/analysis';
import { serverSources } from './sourceHost';
import { completions } from '../core/services/completion';
import type { TextEdit } from '../core/services/edits';
import { foldingRanges } from '../core/services/folding';
import { hover } from '../core/services/hover';
import { pointLenses, sweepLenses } from '../core/services/lenses';
import { linearizeEdit, staticDiagnostics } from '../core/services/linearBlock';
import { pointAt } from '../core/services/locate';
import { definition, prepareRename, references, rename } from '../core/services/navigation';
import { quickFixes, type DiagnosticRef } from '../core/services/quickFixes';
import { TOKEN_MODIFIERS, TOKEN_TYPES, semanticTokens } from '../core/services/semanticTokens';
import { solveEdits } from '../core/services/solve';
import { documentOutline } from '../core/services/symbols';
import { toCompletionItem, toDiagnostic, toDocumentSymbol, toRange, toSpan, toTextEdit, type DiagnosticData } from './convert';
import './extensions';
import { takeRegistrations, type RequestHandler, type ServerContext } from './registry';
import { DEFAULT_SETTINGS, sanitizeSettings, type PoiseSettings } from './settings';

export { registerRequest, type RequestHandler, type ServerContext } from './registry';
export type { PoiseSettings } from './settings';

export const SOLVE_COMMAND = 'poise.server.solvePoint';
export const LINEARIZE_COMMAND = 'poise.server.linearizePoint';
/** Client-side commands the lenses invoke (registered by the VS Code extension). */
export const REPORT_COMMAND = 'poise.openReport';
export const SWEEP_COMMAND = 'poise.sweep';

/** The same two operations as code actions (kinds under `source`), for editors without code lenses. */
export const SOLVE_ACTION = 'source.poise.solvePoint';
export const LINEARIZE_ACTION = 'source.poise.linearizePoint';

export const SEMANTIC_LEGEND = { tokenTypes: [...TOKEN_TYPES], tokenModifiers: [...TOKEN_MODIFIERS] };

/** Diagnostics runs that took longer than this solve points after publishing the static diagnostics. */
const SLOW_MS = 60;
/** Extra pause before solving the points of a slow model (its static diagnostics are already out). */
const POINT_DELAY_MS = 200;
/** Models this large publish static diagnostics first even before the first run was timed. */
const LARGE_MODEL_EQUATIONS = 300;
/** How long to wait for workspace/configuration before using the defaults. */
const CONFIG_TIMEOUT_MS = 3000;

let context: ServerContext | undefined;

/** The running server's context (undefined before startServer()). */
export function getServerContext(): ServerContext | undefined {
  return context;
}

export function startServer(): void {
  if (context) return;
  const connection = createConnection(ProposedFeatures.all);
  const documents = new TextDocuments(TextDocument);
  const sources = serverSources(documents);
  const log = (m: string) => connection.console.log(m);
  /** A message the editor shows (a plain notification: no answer is awaited). */
  const showError = (message: string) => void connection.sendNotification(ShowMessageNotification.type, { type: MessageType.Error, message });
  const logError = (where: string, e: unknown) => connection.console.error(`${where}: ${e instanceof Error ? e.stack ?? e.message : String(e)}`);

  process.on('uncaughtException', (e) => logError('uncaught exception', e));
  process.on('unhandledRejection', (e) => logError('unhandled rejection', e));

  // ---- client facts and settings -------------------------------------------------------------------
  let caps: ClientCapabilities = {};
  let pullConfiguration = false;
  let debounceMs = 30;
  let timing = false;
  let clientCommands = true;
  let globalSettings: PoiseSettings = { ...DEFAULT_SETTINGS };
  const pending = new Map<string, Promise<PoiseSettings>>();
  const resolved = new Map<string, PoiseSettings>();
  /** Bumped when the settings change, so that answers to older requests are not cached. */
  let settingsEpoch = 0;
  const forgetSettings = () => {
    settingsEpoch++;
    pending.clear();
    resolved.clear();
  };

  const withTimeout = <T>(p: Promise<T>, fallback: () => T): Promise<T> =>
    new Promise<T>((resolve) => {
      const timer = setTimeout(() => resolve(fallback()), CONFIG_TIMEOUT_MS);
      p.then(
        (v) => { clearTimeout(timer); resolve(v); },
        () => { clearTimeout(timer); resolve(fallback()); },
      );
    });

  const settingsFor = (uri: string): Promise<PoiseSettings> => {
    if (!pullConfiguration) return Promise.resolve(globalSettings);
    let p = pending.get(uri);
    if (!p) {
      const epoch = settingsEpoch;
      p = withTimeout(connection.workspace.getConfiguration({ scopeUri: uri, section: 'poise' }).then(sanitizeSettings), () => globalSettings).then((s) => {
        if (epoch === settingsEpoch) resolved.set(uri, s); // not when the settings changed meanwhile
        return s;
      });
      pending.set(uri, p);
    }
    return p;
  };
  /** Settings without waiting: the last ones pulled for the document, else the global ones. */
  const settingsNow = (uri: string): PoiseSettings => resolved.get(uri) ?? globalSettings;

  const pullGlobal = async () => {
    if (!pullConfiguration) return;
    globalSettings = await withTimeout(connection.workspace.getConfiguration('poise').then(sanitizeSettings), () => globalSettings);
  };

  // ---- analyses, cached per URI and version ---------------------------------------------------------
  const cache = new Map<string, { version: number; warnUnused: boolean; analysis: Analysis }>();
  const analysisOf = (doc: TextDocument, s: PoiseSettings): Analysis => {
    const hit = cache.get(doc.uri);
    if (hit && hit.version === doc.version && hit.warnUnused === s.warnUnused) return hit.analysis;
    const analysis = new Analysis(doc.getText(), { warnUnused: s.warnUnused }, doc.uri, sources);
    cache.set(doc.uri, { version: doc.version, warnUnused: s.warnUnused, analysis });
    return analysis;
  };
  const analysisFor = (uri: string): Analysis | undefined => {
    const doc = documents.get(uri);
    return doc ? analysisOf(doc, settingsNow(uri)) : undefined;
  };

  context = { connection, documents, analysis: analysisFor, settings: settingsFor, log };

  // ---- guarded handlers -----------------------------------------------------------------------------
  function runSafe<P, R>(name: string, neutral: R, fn: (params: P, token?: CancellationToken) => R | Promise<R>) {
    return async (params: P, token?: CancellationToken): Promise<R> => {
      try {
        if (token?.isCancellationRequested) return neutral;
        return await fn(params, token);
      } catch (e) {
        if (e instanceof ResponseError) throw e; // a deliberate error answer (e.g. an invalid rename)
        logError(name, e);
        return neutral;
      }
    };
  }

  /** The open document and its analysis for a request, or undefined. */
  const docAnalysis = (uri: string) => {
    const doc = documents.get(uri);
    if (!doc) return undefined;
    const s = settingsNow(uri);
    return { doc, a: analysisOf(doc, s), s };
  };

  const workspaceEdit = (doc: TextDocument, a: Analysis, edits: readonly TextEdit[]): WorkspaceEdit => {
    const lsp: LspTextEdit[] = edits.map((e) => toTextEdit(a, e));
    if (caps.workspace?.workspaceEdit?.documentChanges) {
      return { documentChanges: [{ textDocument: { uri: doc.uri, version: doc.version }, edits: lsp }] };
    }
    return { changes: { [doc.uri]: lsp } };
  };

  // ---- diagnostics: debounced, cancelled by newer edits, static ones first for slow models ----------
  const timers = new Map<string, NodeJS.Timeout>();
  const generation = new Map<string, number>();
  const solveMs = new Map<string, number>();
  const yieldToLoop = () => new Promise<void>((r) => setImmediate(r));

  const publish = (uri: string, version: number, a: Analysis, ds: ReturnType<Analysis['allDiagnostics']>) => {
    const sorted = [...ds].sort((x, y) => x.span.start - y.span.start || x.code.localeCompare(y.code));
    void connection.sendDiagnostics({ uri, version, diagnostics: sorted.map((d) => toDiagnostic(a, uri, d)) });
  };

  const validate = async (uri: string, gen: number): Promise<void> => {
    const current = () => generation.get(uri) === gen;
    const s = await settingsFor(uri);
    const doc = documents.get(uri);
    if (!current() || !doc) return;
    const version = doc.version;
    const t0 = performance.now();
    const a = analysisOf(doc, s);
    const t1 = performance.now();
    const expected = solveMs.get(uri) ?? (a.lowered.equations.length > LARGE_MODEL_EQUATIONS ? Infinity : 0);
    const slow = a.canSolve && a.pointNames.length > 0 && expected > SLOW_MS;
    if (slow) {
      publish(uri, version, a, staticDiagnostics(a));
      // points of a large model are solved only once typing pauses a little longer
      await new Promise<void>((r) => setTimeout(r, POINT_DELAY_MS));
      if (!current()) return;
    }
    const t2 = performance.now();
    if (a.canSolve) {
      for (const p of a.pointNames) {
        if (slow) {
          await yieldToLoop(); // lets a newer edit (or a request) in between points
          if (!current()) return;
        }
        const sol = a.point(p);
        if (sol?.ok) a.linear(p);
      }
    }
    const t3 = performance.now();
    if (a.canSolve) solveMs.set(uri, t3 - t2);
    if (!current() || documents.get(uri)?.version !== version) return;
    publish(uri, version, a, a.allDiagnostics());
    if (timing) log(`diagnostics ${uri} v${version}: analyze ${(t1 - t0).toFixed(1)} ms, points ${(t3 - t2).toFixed(1)} ms, total ${(performance.now() - t0).toFixed(1)} ms${slow ? ' (static diagnostics first)' : ''}`);
  };

  const schedule = (uri: string, delay: number) => {
    const gen = (generation.get(uri) ?? 0) + 1;
    generation.set(uri, gen);
    const old = timers.get(uri);
    if (old) clearTimeout(old);
    timers.set(uri, setTimeout(() => {
      timers.delete(uri);
      validate(uri, gen).catch((e) => logError('diagnostics', e));
    }, delay));
  };
  const revalidateAll = () => {
    for (const d of documents.all()) schedule(d.uri, 0);
  };

  documents.onDidChangeContent((e) => {
    const first = !generation.has(e.document.uri);
    schedule(e.document.uri, first ? 0 : debounceMs);
  });
  documents.onDidClose((e) => {
    const uri = e.document.uri;
    const t = timers.get(uri);
    if (t) clearTimeout(t);
    timers.delete(uri);
    generation.delete(uri);
    cache.delete(uri);
    solveMs.delete(uri);
    pending.delete(uri);
    resolved.delete(uri);
    void connection.sendDiagnostics({ uri, diagnostics: [] });
  });

  // ---- lifecycle ------------------------------------------------------------------------------------
  connection.onInitialize((params): InitializeResult => {
    caps = params.capabilities ?? {};
    pullConfiguration = !!caps.workspace?.configuration;
    const opts = (params.initializationOptions ?? {}) as { debounceMs?: unknown; timing?: unknown; clientCommands?: unknown };
    if (typeof opts.debounceMs === 'number' && opts.debounceMs >= 0 && Number.isFinite(opts.debounceMs)) debounceMs = opts.debounceMs;
    timing = opts.timing === true;
    clientCommands = opts.clientCommands !== false;
    return {
      capabilities: {
        textDocumentSync: TextDocumentSyncKind.Incremental,
        hoverProvider: true,
        completionProvider: { triggerCharacters: ['[', '/', '*'], resolveProvider: false },
        definitionProvider: true,
        referencesProvider: true,
        renameProvider: { prepareProvider: true },
        documentSymbolProvider: true,
        foldingRangeProvider: true,
        semanticTokensProvider: { legend: SEMANTIC_LEGEND, full: true, range: false },
        codeActionProvider: { codeActionKinds: [CodeActionKind.QuickFix, SOLVE_ACTION, LINEARIZE_ACTION] },
        codeLensProvider: { resolveProvider: false },
        executeCommandProvider: { commands: [SOLVE_COMMAND, LINEARIZE_COMMAND] },
      },
      serverInfo: { name: 'poise', version: '0.1.0' },
    };
  });

  connection.onInitialized(
    runSafe('initialized', undefined, async () => {
      if (pullConfiguration && caps.workspace?.didChangeConfiguration?.dynamicRegistration) {
        await connection.client.register(DidChangeConfigurationNotification.type, { section: 'poise' });
      }
      await pullGlobal();
      forgetSettings();
      revalidateAll();
    }),
  );

  connection.onDidChangeConfiguration(
    runSafe('didChangeConfiguration', undefined, async (change: { settings?: unknown }) => {
      const pushed = (change.settings as { poise?: unknown } | undefined)?.poise;
      if (pushed !== undefined) globalSettings = sanitizeSettings(pushed);
      forgetSettings();
      await pullGlobal();
      revalidateAll();
      if (caps.workspace?.codeLens?.refreshSupport) void connection.sendRequest('workspace/codeLens/refresh').catch(() => undefined);
    }),
  );

  connection.onShutdown(() => {
    for (const t of timers.values()) clearTimeout(t);
    timers.clear();
  });

  // ---- language features ----------------------------------------------------------------------------
  connection.onHover(
    runSafe('hover', null, (p) => {
      const d = docAnalysis(p.textDocument.uri);
      if (!d) return null;
      const h = hover(d.a, d.a.lines.offset(p.position), { digits: d.s.digits, activePoint: d.s.activePoint });
      return h ? { contents: { kind: 'markdown' as const, value: h.markdown }, range: toRange(d.a, h.span) } : null;
    }),
  );

  connection.onCompletion(
    runSafe('completion', { isIncomplete: false, items: [] }, (p) => {
      const d = docAnalysis(p.textDocument.uri);
      if (!d) return { isIncomplete: false, items: [] };
      const snippets = !!caps.textDocument?.completion?.completionItem?.snippetSupport;
      const items = completions(d.a, d.a.lines.offset(p.position)).map((c) => toCompletionItem(d.a, c, snippets));
      return { isIncomplete: false, items };
    }),
  );

  connection.onDefinition(
    runSafe('definition', [], (p) => {
      const d = docAnalysis(p.textDocument.uri);
      if (!d) return [];
      return definition(d.a, d.a.lines.offset(p.position)).map((s) => ({ uri: d.doc.uri, range: toRange(d.a, s) }));
    }),
  );

  connection.onReferences(
    runSafe('references', [], (p) => {
      const d = docAnalysis(p.textDocument.uri);
      if (!d) return [];
      return references(d.a, d.a.lines.offset(p.position), p.context?.includeDeclaration ?? true).map((s) => ({ uri: d.doc.uri, range: toRange(d.a, s) }));
    }),
  );

  connection.onPrepareRename(
    runSafe('prepareRename', null, (p) => {
      const d = docAnalysis(p.textDocument.uri);
      if (!d) return null;
      const r = prepareRename(d.a, d.a.lines.offset(p.position));
      return r ? { range: toRange(d.a, r.span), placeholder: r.placeholder } : null;
    }),
  );

  connection.onRenameRequest(
    runSafe('rename', null, (p) => {
      const d = docAnalysis(p.textDocument.uri);
      if (!d) return null;
      const r = rename(d.a, d.a.lines.offset(p.position), p.newName);
      if (!r.ok) throw new ResponseError(-32602 /* InvalidParams */, r.message);
      return workspaceEdit(d.doc, d.a, r.edits);
    }),
  );

  connection.onDocumentSymbol(
    runSafe('documentSymbol', [], (p) => {
      const d = docAnalysis(p.textDocument.uri);
      return d ? documentOutline(d.a).map((o) => toDocumentSymbol(d.a, o)) : [];
    }),
  );

  connection.onFoldingRanges(
    runSafe('foldingRange', [], (p) => {
      const d = docAnalysis(p.textDocument.uri);
      return d ? foldingRanges(d.a).map((f) => ({ startLine: f.startLine, endLine: f.endLine, kind: f.kind })) : [];
    }),
  );

  connection.languages.semanticTokens.on(
    runSafe('semanticTokens', { data: [] }, (p) => {
      const d = docAnalysis(p.textDocument.uri);
      if (!d) return { data: [] };
      const b = new SemanticTokensBuilder();
      for (const t of semanticTokens(d.a)) {
        const pos = d.a.lines.position(t.span.start);
        let mods = 0;
        for (const m of t.modifiers) mods |= 1 << TOKEN_MODIFIERS.indexOf(m);
        b.push(pos.line, pos.character, t.span.end - t.span.start, TOKEN_TYPES.indexOf(t.type), mods);
      }
      return b.build();
    }),
  );

  connection.onCodeLens(
    runSafe('codeLens', [] as CodeLens[], (p) => {
      const d = docAnalysis(p.textDocument.uri);
      if (!d) return [];
      const uri = d.doc.uri;
      const out: CodeLens[] = [];
      for (const l of pointLenses(d.a, d.s.digits)) {
        const start = d.a.lines.position(l.span.start);
        const range = { start, end: start };
        const args = [uri, l.point];
        out.push({ range, command: { title: l.solve.title, command: SOLVE_COMMAND, arguments: args } });
        out.push({ range, command: { title: l.linearize.title, command: LINEARIZE_COMMAND, arguments: args } });
        if (!clientCommands) continue;
        out.push({ range, command: { title: l.report.title, command: REPORT_COMMAND, arguments: args } });
        out.push({ range, command: { title: l.sweep.title, command: SWEEP_COMMAND, arguments: args } });
      }
      if (!clientCommands) return out;
      // above each declared sweep block: run it as declared (the client skips its dialog given a spec)
      let sweeps: ReturnType<typeof sweepLenses> = [];
      try {
        sweeps = sweepLenses(d.a);
      } catch (e) {
        logError('codeLens (sweeps)', e);
      }
      for (const l of sweeps) {
        const start = d.a.lines.position(l.span.start);
        const range = { start, end: start };
        out.push(l.spec
          ? { range, command: { title: l.title, command: SWEEP_COMMAND, arguments: [uri, l.point, l.spec] } }
          : { range, command: { title: l.title, tooltip: l.problem, command: '' } });
      }
      return out;
    }),
  );

  connection.onCodeAction(
    runSafe('codeAction', [] as CodeAction[], (p) => {
      const d = docAnalysis(p.textDocument.uri);
      if (!d) return [];
      const only = p.context.only;
      const wanted = (kind: string) => !only || only.some((k) => kind === k || kind.startsWith(k + '.'));
      const out: CodeAction[] = [];
      if (wanted(CodeActionKind.QuickFix)) {
        const refs: (DiagnosticRef & { lsp: (typeof p.context.diagnostics)[number] })[] = [];
        for (const x of p.context.diagnostics ?? []) {
          if (x.source !== 'poise' || typeof x.code !== 'string') continue;
          refs.push({ code: x.code, span: toSpan(d.a, x.range), data: (x.data as DiagnosticData | undefined)?.core, lsp: x });
        }
        for (const f of quickFixes(d.a, refs, d.s.digits)) {
          out.push({
            title: f.title,
            kind: CodeActionKind.QuickFix,
            diagnostics: [(f.diagnostic as (typeof refs)[number]).lsp],
            isPreferred: f.isPreferred,
            edit: workspaceEdit(d.doc, d.a, f.edits),
          });
        }
      }
      // Solve and Linearize as source actions too, for editors without code lenses (Helix, …)
      const point = pointAt(d.a, d.a.lines.offset(p.range.start));
      if (point) {
        if (wanted(SOLVE_ACTION)) {
          const r = solveEdits(d.a, point, d.s.digits);
          if (r.ok && r.edits.length) out.push({ title: `Solve point ${point}`, kind: SOLVE_ACTION, edit: workspaceEdit(d.doc, d.a, r.edits) });
        }
        if (wanted(LINEARIZE_ACTION)) {
          const r = linearizeEdit(d.a, point, d.s.digits);
          if (r.ok && d.a.text.slice(r.edit.span.start, r.edit.span.end) !== r.edit.newText) {
            out.push({ title: `Linearize at point ${point}`, kind: LINEARIZE_ACTION, edit: workspaceEdit(d.doc, d.a, [r.edit]) });
          }
        }
      }
      return out;
    }),
  );

  connection.onExecuteCommand(
    runSafe('executeCommand', null as unknown, async (p) => {
      const [uri, pointArg] = (p.arguments ?? []) as unknown[];
      if (p.command !== SOLVE_COMMAND && p.command !== LINEARIZE_COMMAND) return null;
      const d = typeof uri === 'string' ? docAnalysis(uri) : undefined;
      if (!d) {
        showError('Poise: open the model file first.');
        return { applied: false, message: 'the document is not open' };
      }
      await settingsFor(d.doc.uri);
      const s = settingsNow(d.doc.uri);
      const a = analysisOf(d.doc, s);
      const point = typeof pointArg === 'string' && pointArg ? pointArg : a.pointNames[0];
      if (!point) {
        showError('Poise: the file has no point: add a "point NAME:" block.');
        return { applied: false, message: 'no point' };
      }
      let edits: TextEdit[];
      let label: string;
      if (p.command === SOLVE_COMMAND) {
        const r = solveEdits(a, point, s.digits);
        if (!r.ok) {
          showError(`Poise: point "${point}" cannot be solved: ${r.message}`);
          return { applied: false, message: r.message };
        }
        edits = r.edits;
        label = `Solve point ${point}`;
      } else {
        const r = linearizeEdit(a, point, s.digits);
        if (!r.ok) {
          showError(`Poise: point "${point}" cannot be linearized: ${r.message}`);
          return { applied: false, message: r.message };
        }
        edits = a.text.slice(r.edit.span.start, r.edit.span.end) === r.edit.newText ? [] : [r.edit];
        label = `Linearize at point ${point}`;
      }
      if (!edits.length) return { applied: true, edits: 0 };
      const res = await connection.workspace.applyEdit({ label, edit: workspaceEdit(d.doc, a, edits) });
      if (!res.applied) log(`${label}: the editor did not apply the edit${res.failureReason ? ` (${res.failureReason})` : ''}`);
      return { applied: res.applied, edits: edits.length };
    }),
  );

  connection.onRequest(
    'poise/pointAt',
    runSafe('poise/pointAt', { point: null as string | null }, (p: { uri: string; position: { line: number; character: number } }) => {
      const d = docAnalysis(p.uri);
      if (!d || !p.position) return { point: null };
      return { point: pointAt(d.a, d.a.lines.offset(p.position)) };
    }),
  );

  // ---- custom requests from other modules -----------------------------------------------------------
  takeRegistrations((method: string, handler: RequestHandler) => {
    connection.onRequest(method, async (params: unknown, token: CancellationToken) => {
      try {
        return await handler(params, context!, token);
      } catch (e) {
        if (e instanceof ResponseError) throw e;
        logError(method, e);
        throw new ResponseError(-32603 /* InternalError */, e instanceof Error ? e.message : String(e));
      }
    });
  });

  documents.listen(connection);
  connection.listen();
}
