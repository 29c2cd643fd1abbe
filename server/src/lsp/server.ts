/**
 * The Poise language server: a thin shell around the pure analysis core. The parts:
 *
 * - analyses.ts — open documents' analyses (static stages on this thread, cached per URI and version) and
 *   where point work runs (inline for a quick model, a worker thread for a slow one: offload.ts, worker.ts);
 * - diagnosticsRun.ts — debounced diagnostics, cancelled by the next edit;
 * - features.ts — hover, completion, navigation, rename, outline, folding, semantic tokens, lenses, code
 *   actions and the Solve / Linearize command (jobs.ts `pointEdit`, written once);
 * - customRequests.ts — poise/report, poise/sweep, poise/sweepCandidates, poise/export, poise/pointAt, typed
 *   in requests.ts (shared with the VS Code client);
 * - guard.ts and params.ts — every request checked at the edge and guarded (cancellation, invalid params,
 *   failures answered as errors; the server never crashes).
 *
 * Transport: `createConnection(ProposedFeatures.all)` reads the command line, so the same entry serves
 * `--stdio` (any LSP editor: `npx poise lsp --stdio`) and `--node-ipc` (the VS Code client).
 *
 * Initialization options (all optional): `debounceMs` (number) — delay between the last edit and the
 * diagnostics run (default 30 ms); `timing` (boolean) — log the time of each diagnostics run;
 * `clientCommands: false` — leave out the Report, Sweep… and Run sweep lenses, whose commands only the
 * VS Code extension implements.
 *
 * Other modules may add requests with `registerRequest` (registry.ts), before or after startServer().
 */
import {
  CodeActionKind, DidChangeConfigurationNotification, DidChangeWatchedFilesNotification, ProposedFeatures, TextDocumentSyncKind, TextDocuments, createConnection,
  type ClientCapabilities, type InitializeResult,
} from 'vscode-languageserver/node';
import { TextDocument } from 'vscode-languageserver-textdocument';
import { Analyses } from './analyses';
import { registerCustomRequests } from './customRequests';
import { DiagnosticsRun } from './diagnosticsRun';
import './extensions';
import { LINEARIZE_ACTION, SEMANTIC_LEGEND, SOLVE_ACTION, registerFeatures } from './features';
import { guard, guardNotification } from './guard';
import { anyParams } from './params';
import { takeRegistrations, type RequestHandler, type ServerContext } from './registry';
import { LINEARIZE_COMMAND, SOLVE_COMMAND } from './requests';
import { SettingsStore } from './settings';
import { ToleranceSamples } from './tolerances';

export { registerRequest, type RequestHandler, type ServerContext } from './registry';
export type { PoiseSettings } from './settings';
export { LINEARIZE_COMMAND, REPORT_COMMAND, SOLVE_COMMAND, SWEEP_COMMAND } from './requests';
export { LINEARIZE_ACTION, SEMANTIC_LEGEND, SOLVE_ACTION } from './features';

/** Default delay between the last edit and the diagnostics run (ms); docs/editor.md gives the same. */
export const DEFAULT_DEBOUNCE_MS = 30;

let context: ServerContext | undefined;

/** The running server's context (undefined before startServer()). */
export function getServerContext(): ServerContext | undefined {
  return context;
}

export function startServer(): void {
  if (context) return;
  const connection = createConnection(ProposedFeatures.all);
  const documents = new TextDocuments(TextDocument);
  const log = (m: string) => connection.console.log(m);
  const logError = (where: string, e: unknown) => connection.console.error(`${where}: ${e instanceof Error ? e.stack ?? e.message : String(e)}`);
  process.on('uncaughtException', (e) => logError('uncaught exception', e));
  process.on('unhandledRejection', (e) => logError('unhandled rejection', e));

  let caps: ClientCapabilities = {};
  let clientCommands = true;
  const options = { debounceMs: DEFAULT_DEBOUNCE_MS, timing: false };
  const settings = new SettingsStore((item) => connection.workspace.getConfiguration(item));
  const analyses = new Analyses(documents, settings, log);
  const diagnostics = new DiagnosticsRun(connection, analyses, options, log, logError);
  const samples = new ToleranceSamples(documents, log);
  context = { connection, documents, analysis: (uri) => analyses.open(uri)?.a, settings: (uri) => settings.for(uri), log };

  documents.onDidChangeContent((e) => {
    diagnostics.changed(e.document.uri);
    // the open models that place parts from this file are analysed again
    for (const u of analyses.usersOf(e.document.uri)) diagnostics.changed(u);
  });
  documents.onDidClose((e) => {
    const users = analyses.usersOf(e.document.uri);
    analyses.forget(e.document.uri);
    // a closed parts file is read from the disk again by the models that use it
    for (const u of users) diagnostics.changed(u);
    settings.forget(e.document.uri);
    diagnostics.closed(e.document.uri);
  });

  connection.onInitialize((params): InitializeResult => {
    caps = params.capabilities ?? {};
    settings.pull = !!caps.workspace?.configuration;
    const opts = (params.initializationOptions ?? {}) as { debounceMs?: unknown; timing?: unknown; clientCommands?: unknown };
    if (typeof opts.debounceMs === 'number' && opts.debounceMs >= 0 && Number.isFinite(opts.debounceMs)) options.debounceMs = opts.debounceMs;
    options.timing = opts.timing === true;
    clientCommands = opts.clientCommands !== false;
    return { capabilities: capabilities(), serverInfo: { name: 'poise', version: '0.1.0' } };
  });

  connection.onInitialized(guardNotification('initialized', async () => {
    if (settings.pull && caps.workspace?.didChangeConfiguration?.dynamicRegistration) {
      await connection.client.register(DidChangeConfigurationNotification.type, { section: 'poise' });
    }
    if (caps.workspace?.didChangeWatchedFiles?.dynamicRegistration) {
      // parts files changed on the disk (not open in the editor): the open models that bring them in
      await connection.client.register(DidChangeWatchedFilesNotification.type, { watchers: [{ globPattern: '**/*.poise' }] });
    }
    await settings.changed();
    diagnostics.all();
  }, logError));

  connection.onDidChangeWatchedFiles(guardNotification('workspace/didChangeWatchedFiles', (p: { changes?: { uri: string }[] }) => {
    for (const c of p?.changes ?? []) if (typeof c?.uri === 'string') for (const u of analyses.usersOf(c.uri)) diagnostics.changed(u);
  }, logError));

  connection.onDidChangeConfiguration(guardNotification('workspace/didChangeConfiguration', async (change: { settings?: unknown }) => {
    await settings.changed((change?.settings as { poise?: unknown } | undefined)?.poise);
    diagnostics.all();
    if (caps.workspace?.codeLens?.refreshSupport) void connection.sendRequest('workspace/codeLens/refresh').catch(() => undefined);
  }, logError));

  connection.onShutdown(() => {
    diagnostics.dispose();
    analyses.dispose();
    samples.dispose();
  });

  registerFeatures({ connection, analyses, caps: () => caps, clientCommands: () => clientCommands, log, logError, samples });
  registerCustomRequests(connection, analyses, log, logError, samples);
  takeRegistrations((method: string, handler: RequestHandler) => {
    connection.onRequest(method, guard(method, anyParams, (p, token) => handler(p, context!, token), logError));
  });

  documents.listen(connection);
  connection.listen();
}

function capabilities(): InitializeResult['capabilities'] {
  return {
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
  };
}
