// The Poise extension: starts the bundled language server (dist/server.js) for `poise` documents and adds
// the client-side commands (reports, sweeps, export). Every page and list comes from the server
// (the requests typed in server/src/lsp/requests.ts); the client only asks and shows. Solve and Linearize run on the server: the server
// declares `poise.server.solvePoint` / `poise.server.linearizePoint` as executeCommand commands, the
// language client registers them, and the palette commands here only find the point at the cursor first.
import * as path from 'path';
import * as vscode from 'vscode';
import {
  LanguageClient,
  type LanguageClientOptions,
  type ServerOptions,
  TransportKind,
} from 'vscode-languageclient/node';
import {
  ExpandedRequest, ExportRequest, LINEARIZE_COMMAND, PointAtRequest, ReportRequest, SOLVE_COMMAND, SweepCandidatesRequest, SweepRequest,
  type ExportFormatName, type SweepCandidate, type SweepSpecArg,
} from '../../server/src/lsp/requests';
import { PanelManager } from './panels';

const LANGUAGE = 'poise';

let client: LanguageClient | undefined;
let starting: Promise<void> | undefined;

function errorMessage(e: unknown): string {
  return e instanceof Error ? e.message : String(e);
}

/** Wraps a command handler so that every failure is shown to the user instead of being lost. */
function guarded<A extends unknown[]>(name: string, fn: (...args: A) => Promise<unknown>) {
  return async (...args: A): Promise<void> => {
    try {
      await fn(...args);
    } catch (e) {
      client?.outputChannel.appendLine(`${name}: ${errorMessage(e)}`);
      void vscode.window.showErrorMessage(`Poise: ${errorMessage(e)}`);
    }
  };
}

async function runningClient(): Promise<LanguageClient> {
  if (!client) throw new Error('the Poise language server is not available');
  await starting;
  if (!client.isRunning()) throw new Error('the Poise language server is not running (see the "Poise" output)');
  return client;
}

function toUri(value: unknown): vscode.Uri | undefined {
  if (value instanceof vscode.Uri) return value;
  if (typeof value === 'string' && value) return vscode.Uri.parse(value);
  return undefined;
}

/**
 * The document and point a command applies to: the arguments given by a code lens `[uri, point]`, or else the
 * active `poise` editor and the point block at (or nearest above) its cursor, as found by the server.
 */
async function target(args: unknown[]): Promise<{ uri: vscode.Uri; point: string }> {
  const uri = toUri(args[0]);
  if (uri && typeof args[1] === 'string' && args[1]) return { uri, point: args[1] };
  const editor = vscode.window.activeTextEditor;
  if (!editor || editor.document.languageId !== LANGUAGE) {
    throw new Error('open a .poise model and put the cursor inside a point block');
  }
  const c = await runningClient();
  const result = await c.sendRequest(PointAtRequest, {
    uri: c.code2ProtocolConverter.asUri(editor.document.uri),
    position: c.code2ProtocolConverter.asPosition(editor.selection.active),
  });
  if (!result || !result.point) throw new Error('there is no point block at or above the cursor');
  return { uri: editor.document.uri, point: result.point };
}

async function protocolUri(uri: vscode.Uri): Promise<string> {
  const c = await runningClient();
  return c.code2ProtocolConverter.asUri(uri);
}

async function serverCommand(command: string, args: unknown[]): Promise<void> {
  const { uri, point } = await target(args);
  await vscode.commands.executeCommand(command, await protocolUri(uri), point);
}

async function openReport(panels: PanelManager, args: unknown[]): Promise<void> {
  const { uri, point } = await target(args);
  const wire = await protocolUri(uri);
  await panels.show({
    key: `report|${uri.toString()}|${point}`,
    uri,
    viewType: 'poise.report',
    title: `Report: ${point}`,
    fetch: async () => (await runningClient()).sendRequest(ReportRequest, { uri: wire, point }),
  });
}

function parseNumber(text: string): number {
  return Number(text.trim());
}

function numberValidator(text: string): string | undefined {
  return text.trim() !== '' && Number.isFinite(parseNumber(text)) ? undefined : 'enter a number, e.g. 0.02 or 2e-3';
}

/** A number as a short text for an input box: 0.45 rather than 0.44999999999999996. */
function shortNumber(v: number): string {
  return String(Number(v.toPrecision(6)));
}

function sweepSpecArg(value: unknown): SweepSpecArg | undefined {
  if (!value || typeof value !== 'object') return undefined;
  const v = value as Record<string, unknown>;
  const finite = (x: unknown): x is number => typeof x === 'number' && Number.isFinite(x);
  if (typeof v.vary !== 'string' || !v.vary || !finite(v.from) || !finite(v.to) || !finite(v.steps)) return undefined;
  return {
    sweep: typeof v.sweep === 'string' && v.sweep ? v.sweep : undefined,
    vary: v.vary,
    from: v.from,
    to: v.to,
    steps: v.steps,
    log: v.log === true,
  };
}

async function askVary(wire: string, point: string): Promise<{ name: string; unit: string; from: number; to: number }> {
  const c = await runningClient();
  const candidates = await c.sendRequest(SweepCandidatesRequest, { uri: wire, point });
  const order: Record<string, number> = { input: 0, const: 1, state: 2, var: 3, output: 4 };
  const sorted = [...(candidates ?? [])].sort((a, b) => (order[a.kind] ?? 5) - (order[b.kind] ?? 5));
  type Item = vscode.QuickPickItem & { candidate?: SweepCandidate };
  const items: Item[] = sorted.map((d) => ({
    label: d.name,
    description: `${d.kind}${d.unit ? ` [${d.unit}]` : ''}`,
    detail: `now ${shortNumber(d.value)}${d.unit ? ` [${d.unit}]` : ''}`,
    candidate: d,
  }));
  items.push({
    label: 'Another name…',
    detail: 'a state, var or output must first be fixed with "=" in the point block',
    alwaysShow: true,
  });
  const picked = await vscode.window.showQuickPick(items, {
    title: `Sweep from point '${point}'`,
    placeHolder: 'What to vary (constants and the values the point fixes)',
    matchOnDescription: true,
  });
  if (!picked) throw new Cancelled();
  if (picked.candidate) {
    const d = picked.candidate;
    return { name: d.name, unit: d.unit, from: d.from, to: d.to };
  }
  const name = await vscode.window.showInputBox({
    title: `Sweep from point '${point}'`,
    prompt: 'Name of the quantity to vary',
    validateInput: (t) => (/^[\p{L}_][\p{L}\p{N}_]*$/u.test(t.trim()) ? undefined : 'enter a name'),
  });
  if (name === undefined) throw new Cancelled();
  return { name: name.trim(), unit: '', from: 0, to: 1 };
}

/** Thrown when the user dismisses a dialog: the command ends quietly. */
class Cancelled extends Error {
  constructor() {
    super('cancelled');
  }
}

/** Asks what to vary and over which range (the Sweep… lens and the palette command). */
async function askSweep(wire: string, point: string): Promise<SweepSpecArg> {
  const vary = await askVary(wire, point);
  const unit = vary.unit ? ` [${vary.unit}]` : '';
  const ask = async (prompt: string, value: string, validate: (t: string) => string | undefined) => {
    const answer = await vscode.window.showInputBox({
      title: `Sweep ${vary.name} from point '${point}'`,
      prompt,
      value,
      validateInput: validate,
    });
    if (answer === undefined) throw new Cancelled();
    return answer;
  };
  const from = parseNumber(await ask(`Start value of ${vary.name}${unit}`, shortNumber(vary.from), numberValidator));
  const to = parseNumber(
    await ask(`End value of ${vary.name}${unit}`, shortNumber(vary.to), (t) =>
      numberValidator(t) ?? (parseNumber(t) === from ? 'the end must differ from the start' : undefined),
    ),
  );
  const steps = parseNumber(
    await ask('Number of steps', '40', (t) =>
      /^\s*\d+\s*$/.test(t) && parseNumber(t) >= 1 && parseNumber(t) <= 10000 ? undefined : 'a whole number from 1 to 10000',
    ),
  );
  let log = false;
  if (from > 0 && to > 0) {
    const spacing = await vscode.window.showQuickPick(
      [
        { label: 'Linear spacing', log: false },
        { label: 'Logarithmic spacing', log: true },
      ],
      { title: `Sweep ${vary.name} from ${from} to ${to}${unit}`, placeHolder: 'Spacing of the steps' },
    );
    if (!spacing) throw new Cancelled();
    log = spacing.log;
  }
  return { vary: vary.name, from, to, steps, log };
}

/**
 * The `poise.sweep` command. Arguments `[uri, point]` (the Sweep… lens) or none (the palette: the point at
 * the cursor) ask what to vary; `[uri, point, spec]` (the Run sweep lens of a declared `sweep` block) runs
 * `spec` = {sweep?, vary, from, to, steps, log} without asking.
 */
async function sweep(panels: PanelManager, args: unknown[]): Promise<void> {
  try {
    const { uri, point } = await target(args);
    const wire = await protocolUri(uri);
    const given = sweepSpecArg(args[2]);
    const spec = given ?? (await askSweep(wire, point));
    const params = { uri: wire, point, vary: spec.vary, from: spec.from, to: spec.to, steps: spec.steps, log: spec.log === true, sweep: spec.sweep };
    await panels.show({
      key: spec.sweep ? `sweep|${uri.toString()}|${spec.sweep}` : `sweep|${uri.toString()}|${point}|${spec.vary}`,
      uri,
      viewType: 'poise.sweep',
      title: spec.sweep ? `Sweep ${spec.sweep}: ${spec.vary} (${point})` : `Sweep: ${spec.vary} (${point})`,
      fetch: async () => (await runningClient()).sendRequest(SweepRequest, params),
    });
  } catch (e) {
    if (!(e instanceof Cancelled)) throw e;
  }
}

const FORMATS: { format: ExportFormatName; label: string; description: string; extension: string; language: string }[] = [
  { format: 'json', label: 'JSON', description: 'matrices A, B, C, D with names and units', extension: 'json', language: 'json' },
  { format: 'csv', label: 'CSV', description: 'one row per number: kind, row, column, value, unit', extension: 'csv', language: 'plaintext' },
  { format: 'markdown', label: 'Markdown', description: 'tables for notes and reports', extension: 'md', language: 'markdown' },
  { format: 'latex', label: 'LaTeX', description: 'matrices for a document', extension: 'tex', language: 'latex' },
  { format: 'numpy', label: 'NumPy', description: 'Python source defining arrays', extension: 'py', language: 'python' },
];

/** Read-only documents of the expanded view (`poise-expanded:` URIs), filled from `poise/expanded`. */
const EXPANDED_SCHEME = 'poise-expanded';
const expandedTexts = new Map<string, string>();

/** Shows the flat model the active file stands for (families and parts expanded) in a read-only editor. */
async function showExpanded(): Promise<void> {
  const editor = vscode.window.activeTextEditor;
  if (!editor || editor.document.languageId !== LANGUAGE) throw new Error('open a model file first');
  const c = await runningClient();
  const result = await c.sendRequest(ExpandedRequest, { uri: c.code2ProtocolConverter.asUri(editor.document.uri) });
  const name = path.basename(editor.document.uri.path, '.poise');
  const uri = vscode.Uri.from({ scheme: EXPANDED_SCHEME, path: `/${name} (expanded).poise` });
  expandedTexts.set(uri.toString(), result.text);
  const doc = await vscode.workspace.openTextDocument(uri);
  await vscode.languages.setTextDocumentLanguage(doc, LANGUAGE);
  await vscode.window.showTextDocument(doc, { preview: true, viewColumn: vscode.ViewColumn.Beside });
}

async function exportLinear(args: unknown[]): Promise<void> {
  const { uri, point } = await target(args);
  const choice = await vscode.window.showQuickPick(FORMATS, {
    title: `Export the linear model at point '${point}'`,
    placeHolder: 'Format',
  });
  if (!choice) return;
  const c = await runningClient();
  const result = await c.sendRequest(ExportRequest, {
    uri: await protocolUri(uri),
    point,
    format: choice.format,
  });
  const action = await vscode.window.showQuickPick(
    [
      { label: 'Copy to clipboard', id: 'copy' },
      { label: 'Save to file…', id: 'save' },
      { label: 'Open in an editor', id: 'open' },
    ],
    { title: `${choice.label} export of point '${point}'`, placeHolder: 'What to do with it' },
  );
  if (!action) return;
  if (action.id === 'copy') {
    await vscode.env.clipboard.writeText(result.text);
    void vscode.window.showInformationMessage(`Poise: the ${choice.label} export of '${point}' is on the clipboard.`);
  } else if (action.id === 'save') {
    const base = path.basename(uri.path).replace(/\.poise$/i, '');
    const destination = await vscode.window.showSaveDialog({
      defaultUri: vscode.Uri.joinPath(uri, '..', `${base}-${point}.${choice.extension}`),
      filters: { [choice.label]: [choice.extension] },
      title: `Save the ${choice.label} export of '${point}'`,
    });
    if (!destination) return;
    await vscode.workspace.fs.writeFile(destination, Buffer.from(result.text, 'utf8'));
    void vscode.window.showInformationMessage(`Poise: saved ${vscode.workspace.asRelativePath(destination)}.`);
  } else {
    const doc = await vscode.workspace.openTextDocument({ content: result.text, language: choice.language });
    await vscode.window.showTextDocument(doc, { preview: false, viewColumn: vscode.ViewColumn.Beside });
  }
}

export async function activate(context: vscode.ExtensionContext): Promise<void> {
  const serverModule = context.asAbsolutePath(path.join('dist', 'server.js'));
  const serverOptions: ServerOptions = {
    run: { module: serverModule, transport: TransportKind.ipc },
    debug: { module: serverModule, transport: TransportKind.ipc, options: { execArgv: ['--nolazy', '--inspect=6011'] } },
  };
  const clientOptions: LanguageClientOptions = {
    documentSelector: [{ language: LANGUAGE }],
    // pushes `poise.*` settings on change; the server may also pull them with workspace/configuration
    synchronize: { configurationSection: LANGUAGE },
  };
  // the id 'poise' makes the client read the trace level from the setting `poise.trace.server`
  const c = new LanguageClient(LANGUAGE, 'Poise', serverOptions, clientOptions);
  client = c;
  const panels = new PanelManager((line) => c.outputChannel.appendLine(line));
  context.subscriptions.push(
    panels,
    vscode.commands.registerCommand(
      'poise.solvePoint',
      guarded('poise.solvePoint', (...args: unknown[]) => serverCommand(SOLVE_COMMAND, args)),
    ),
    vscode.commands.registerCommand(
      'poise.linearizePoint',
      guarded('poise.linearizePoint', (...args: unknown[]) => serverCommand(LINEARIZE_COMMAND, args)),
    ),
    vscode.commands.registerCommand('poise.openReport', guarded('poise.openReport', (...args: unknown[]) => openReport(panels, args))),
    vscode.commands.registerCommand('poise.sweep', guarded('poise.sweep', (...args: unknown[]) => sweep(panels, args))),
    vscode.commands.registerCommand('poise.exportLinear', guarded('poise.exportLinear', (...args: unknown[]) => exportLinear(args))),
    vscode.commands.registerCommand('poise.showExpanded', guarded('poise.showExpanded', () => showExpanded())),
    vscode.workspace.registerTextDocumentContentProvider(EXPANDED_SCHEME, { provideTextDocumentContent: (uri) => expandedTexts.get(uri.toString()) ?? '' }),
  );
  starting = c.start().catch((e: unknown) => {
    void vscode.window.showErrorMessage(`Poise: the language server did not start: ${errorMessage(e)}`);
  });
  await starting;
}

export async function deactivate(): Promise<void> {
  const c = client;
  client = undefined;
  if (c) await c.stop();
}
