/**
 * A plain JSON-RPC client for the protocol tests: spawns the real language server (`node
 * out/server/src/lsp/main.js --stdio` after the project build, or `node bin/poise.js lsp --stdio`) and talks
 * LSP to it with vscode-jsonrpc, like any editor other than VS Code would. It keeps its own copy of each
 * open document, answers `workspace/configuration` with the settings it was given and `workspace/applyEdit`
 * by applying the edit to its copy and sending the change back (as incremental changes), and records every
 * `textDocument/publishDiagnostics`.
 */
import { spawn, type ChildProcess } from 'child_process';
import * as path from 'path';
import { createMessageConnection, StreamMessageReader, StreamMessageWriter, type MessageConnection } from 'vscode-jsonrpc/node';
import { TextDocument } from 'vscode-languageserver-textdocument';
import type {
  Diagnostic, InitializeResult, Position, PublishDiagnosticsParams, Range, TextDocumentEdit, TextEdit, WorkspaceEdit,
} from 'vscode-languageserver-protocol';
import { ensureBuilt, ROOT } from '../helpers/cli';

export const MAIN = path.join(ROOT, 'out', 'server', 'src', 'lsp', 'main.js');
export const BIN = path.join(ROOT, 'bin', 'poise.js');

export interface SessionOptions {
  /** How to start the server: the compiled entry (default), the `poise lsp --stdio` command, or a script of the test's own (run with `--stdio`). */
  via?: 'main' | 'bin' | { script: string };
  /** Answered to workspace/configuration (section `poise`); undefined leaves the capability out. */
  settings?: Record<string, unknown>;
  initializationOptions?: Record<string, unknown>;
  /** Whether the client declares `workspace.workspaceEdit.documentChanges` (default true). */
  documentChanges?: boolean;
}

export interface Published {
  params: PublishDiagnosticsParams;
  at: number;
}

export class Session {
  readonly docs = new Map<string, TextDocument>();
  readonly published = new Map<string, Published[]>();
  readonly logs: string[] = [];
  /** window/logMessage messages of type Error (1): the server logs every failed handler so. */
  readonly errors: string[] = [];
  readonly applied: WorkspaceEdit[] = [];
  readonly messages: { type: number; message: string }[] = [];
  stderr = '';
  exited: number | null | undefined = undefined;
  init!: InitializeResult;
  private waiters: (() => void)[] = [];

  constructor(readonly proc: ChildProcess, readonly conn: MessageConnection, public settings: Record<string, unknown> | undefined) {}

  /** Resolves when `pred` holds, checking after every message from the server. */
  until<T>(pred: () => T | undefined | false, timeoutMs = 20000, what = 'condition'): Promise<T> {
    return new Promise<T>((resolve, reject) => {
      const check = () => {
        const v = pred();
        if (v !== undefined && v !== false) {
          clearTimeout(timer);
          this.waiters = this.waiters.filter((w) => w !== check);
          resolve(v as T);
          return true;
        }
        if (this.exited !== undefined) {
          clearTimeout(timer);
          reject(new Error(`the server exited (${this.exited}) while waiting for ${what}; stderr: ${this.stderr}`));
          return true;
        }
        return false;
      };
      const timer = setTimeout(() => {
        this.waiters = this.waiters.filter((w) => w !== check);
        reject(new Error(`timed out waiting for ${what}; stderr: ${this.stderr}; logs: ${this.logs.join('\n')}`));
      }, timeoutMs);
      if (!check()) this.waiters.push(check);
    });
  }

  notifyWaiters(): void {
    for (const w of [...this.waiters]) w();
  }

  /** The latest diagnostics published for the document's current version (waits for them). */
  async diagnostics(uri: string, timeoutMs = 20000): Promise<Diagnostic[]> {
    const version = this.docs.get(uri)?.version;
    return this.until(() => {
      const list = this.published.get(uri);
      const last = list?.[list.length - 1];
      return last && (version === undefined || last.params.version === version) ? last.params.diagnostics : undefined;
    }, timeoutMs, `diagnostics of ${uri} v${version}`);
  }

  text(uri: string): string {
    return this.docs.get(uri)!.getText();
  }

  async open(uri: string, text: string, timeoutMs = 20000): Promise<Diagnostic[]> {
    const doc = TextDocument.create(uri, 'poise', 1, text);
    this.docs.set(uri, doc);
    await this.conn.sendNotification('textDocument/didOpen', { textDocument: { uri, languageId: 'poise', version: 1, text } });
    return this.diagnostics(uri, timeoutMs);
  }

  /** Sends edits as incremental changes (applied in order, each against the result of the previous). */
  async changeIncremental(uri: string, changes: { range: Range; text: string }[]): Promise<number> {
    let doc = this.docs.get(uri)!;
    for (const c of changes) doc = TextDocument.update(doc, [c], doc.version);
    const version = this.docs.get(uri)!.version + 1;
    doc = TextDocument.create(uri, 'poise', version, doc.getText());
    this.docs.set(uri, doc);
    await this.conn.sendNotification('textDocument/didChange', { textDocument: { uri, version }, contentChanges: changes });
    return version;
  }

  /** Replaces the whole text (one full-content change). */
  async change(uri: string, text: string): Promise<number> {
    const version = this.docs.get(uri)!.version + 1;
    this.docs.set(uri, TextDocument.create(uri, 'poise', version, text));
    await this.conn.sendNotification('textDocument/didChange', { textDocument: { uri, version }, contentChanges: [{ text }] });
    return version;
  }

  async closeDoc(uri: string): Promise<void> {
    this.docs.delete(uri);
    await this.conn.sendNotification('textDocument/didClose', { textDocument: { uri } });
  }

  request<R>(method: string, params: unknown): Promise<R> {
    return this.conn.sendRequest(method, params) as Promise<R>;
  }

  hover(uri: string, position: Position) {
    return this.request<{ contents: { kind: string; value: string }; range?: Range } | null>('textDocument/hover', { textDocument: { uri }, position });
  }

  /** Applies a workspace edit to the client's copies and tells the server (as an editor does). */
  async applyWorkspaceEdit(edit: WorkspaceEdit): Promise<boolean> {
    const perDoc: [string, TextEdit[], number | null | undefined][] = [];
    for (const dc of edit.documentChanges ?? []) {
      const tde = dc as TextDocumentEdit;
      if (!tde.textDocument) return false;
      perDoc.push([tde.textDocument.uri, tde.edits as TextEdit[], tde.textDocument.version]);
    }
    for (const [uri, edits] of Object.entries(edit.changes ?? {})) perDoc.push([uri, edits, undefined]);
    for (const [uri, edits, version] of perDoc) {
      const doc = this.docs.get(uri);
      if (!doc) return false;
      if (version !== undefined && version !== null && version !== doc.version) return false; // stale edit: refuse, as editors do
      // incremental changes, last first, so that earlier ranges stay valid
      const sorted = [...edits].sort((x, y) => doc.offsetAt(y.range.start) - doc.offsetAt(x.range.start));
      await this.changeIncremental(uri, sorted.map((e) => ({ range: e.range, text: e.newText })));
    }
    return true;
  }

  /** Point at the first occurrence of `needle` (plus `delta` characters) in the document. */
  pos(uri: string, needle: string, delta = 0, nth = 0): Position {
    const doc = this.docs.get(uri)!;
    const text = doc.getText();
    let i = -1;
    for (let k = 0; k <= nth; k++) {
      i = text.indexOf(needle, i + 1);
      if (i < 0) throw new Error(`"${needle}" not found`);
    }
    return doc.positionAt(i + delta);
  }

  async shutdown(): Promise<void> {
    if (this.exited === undefined) {
      try {
        await Promise.race([this.conn.sendRequest('shutdown'), new Promise((r) => setTimeout(r, 2000))]);
        await this.conn.sendNotification('exit');
      } catch {
        /* already gone */
      }
      await Promise.race([new Promise((r) => this.proc.once('exit', r)), new Promise((r) => setTimeout(r, 3000))]);
    }
    if (this.exited === undefined) this.proc.kill();
    this.conn.dispose();
  }
}

export const uriOf = (name: string) => `file:///poise-test/${name}`;

export async function startSession(opts: SessionOptions = {}): Promise<Session> {
  ensureBuilt();
  const via = opts.via ?? 'main';
  const args = via === 'bin' ? [BIN, 'lsp', '--stdio'] : via === 'main' ? [MAIN, '--stdio'] : [via.script, '--stdio'];
  const proc = spawn(process.execPath, args, { cwd: ROOT, stdio: ['pipe', 'pipe', 'pipe'] });
  const conn = createMessageConnection(new StreamMessageReader(proc.stdout!), new StreamMessageWriter(proc.stdin!));
  const s = new Session(proc, conn, opts.settings);
  proc.stderr!.on('data', (d: Buffer) => (s.stderr += d.toString()));
  proc.on('exit', (code) => {
    s.exited = code;
    s.notifyWaiters();
  });
  conn.onNotification('textDocument/publishDiagnostics', (p: PublishDiagnosticsParams) => {
    let list = s.published.get(p.uri);
    if (!list) s.published.set(p.uri, (list = []));
    list.push({ params: p, at: performance.now() });
    s.notifyWaiters();
  });
  conn.onNotification('window/logMessage', (p: { type: number; message: string }) => {
    s.logs.push(p.message);
    if (p.type === 1) s.errors.push(p.message);
    s.notifyWaiters();
  });
  conn.onNotification('window/showMessage', (p: { type: number; message: string }) => {
    s.messages.push(p);
    s.notifyWaiters();
  });
  conn.onRequest('workspace/configuration', (p: { items: { section?: string }[] }) =>
    p.items.map((it) => (it.section === 'poise' || it.section === undefined ? s.settings ?? {} : null)),
  );
  conn.onRequest('client/registerCapability', () => null);
  conn.onRequest('workspace/codeLens/refresh', () => null);
  conn.onRequest('workspace/applyEdit', async (p: { edit: WorkspaceEdit }) => {
    s.applied.push(p.edit);
    const applied = await s.applyWorkspaceEdit(p.edit);
    return { applied };
  });
  conn.listen();
  s.init = (await conn.sendRequest('initialize', {
    processId: process.pid,
    rootUri: null,
    capabilities: {
      workspace: {
        configuration: opts.settings !== undefined,
        didChangeConfiguration: { dynamicRegistration: true },
        workspaceEdit: { documentChanges: opts.documentChanges ?? true },
        codeLens: { refreshSupport: true },
      },
      textDocument: {
        completion: { completionItem: { snippetSupport: true } },
        hover: { contentFormat: ['markdown', 'plaintext'] },
        publishDiagnostics: { relatedInformation: true, versionSupport: true },
        rename: { prepareSupport: true },
      },
    },
    initializationOptions: opts.initializationOptions,
  })) as InitializeResult;
  await conn.sendNotification('initialized', {});
  return s;
}
