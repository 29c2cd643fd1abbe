// Webview panels that show a page computed by the language server (a point's report, a sweep) and keep it
// up to date while the model is edited.
import * as vscode from 'vscode';
import type { PageResult } from '../../server/src/lsp/requests';
import { makeNonce, messagePage, secureHtml } from './html';

export type { PageResult };

export interface PanelSpec {
  /** identity of the panel: one panel per key */
  key: string;
  /** the model document the page belongs to; the page is recomputed when it changes */
  uri: vscode.Uri;
  /** the webview type, e.g. 'poise.report' */
  viewType: string;
  /** title shown until the first result arrives */
  title: string;
  /** computes the page */
  fetch: () => Promise<PageResult>;
}

const REFRESH_DELAY_MS = 600;

function themeKind(kind: vscode.ColorThemeKind): string {
  switch (kind) {
    case vscode.ColorThemeKind.Light:
      return 'light';
    case vscode.ColorThemeKind.HighContrast:
      return 'high-contrast';
    case vscode.ColorThemeKind.HighContrastLight:
      return 'high-contrast-light';
    default:
      return 'dark';
  }
}

function message(e: unknown): string {
  return e instanceof Error ? e.message : String(e);
}

class ResultPanel {
  private timer: NodeJS.Timeout | undefined;
  private generation = 0;
  private lastHtml: string | undefined;
  private title: string;

  constructor(
    public spec: PanelSpec,
    readonly panel: vscode.WebviewPanel,
    private readonly log: (line: string) => void,
  ) {
    this.title = spec.title;
    panel.webview.html = secureHtml(messagePage(spec.title, 'Computing…', false), makeNonce());
  }

  /** Recomputes the page now; `interactive` errors are shown as a message, the others only in the panel. */
  async refresh(interactive: boolean): Promise<void> {
    const generation = ++this.generation;
    try {
      const result = await this.spec.fetch();
      if (generation !== this.generation) return; // a newer refresh has started
      this.title = result.title || this.spec.title;
      this.panel.title = this.title;
      if (result.html !== this.lastHtml) {
        this.lastHtml = result.html;
        this.panel.webview.html = secureHtml(result.html, makeNonce());
      }
    } catch (e) {
      if (generation !== this.generation) return;
      this.log(`${this.spec.title}: ${message(e)}`);
      if (this.lastHtml === undefined) {
        this.panel.webview.html = secureHtml(messagePage(this.spec.title, message(e), true), makeNonce());
      } else {
        // keep the last good page while the model is being edited, and say it is out of date
        this.panel.title = `${this.title} (out of date)`;
      }
      if (interactive) throw e;
    }
  }

  scheduleRefresh(): void {
    if (this.timer) clearTimeout(this.timer);
    this.timer = setTimeout(() => {
      this.timer = undefined;
      void this.refresh(false);
    }, REFRESH_DELAY_MS);
  }

  postTheme(kind: vscode.ColorThemeKind): void {
    void this.panel.webview.postMessage({ type: 'poise.theme', kind: themeKind(kind) });
  }

  dispose(): void {
    if (this.timer) clearTimeout(this.timer);
    this.generation++;
  }
}

export class PanelManager implements vscode.Disposable {
  private readonly panels = new Map<string, ResultPanel>();
  private readonly subscriptions: vscode.Disposable[] = [];

  constructor(private readonly log: (line: string) => void) {
    this.subscriptions.push(
      vscode.workspace.onDidChangeTextDocument((e) => {
        if (e.contentChanges.length === 0) return;
        const uri = e.document.uri.toString();
        for (const p of this.panels.values()) if (p.spec.uri.toString() === uri) p.scheduleRefresh();
      }),
      vscode.window.onDidChangeActiveColorTheme((theme) => {
        for (const p of this.panels.values()) p.postTheme(theme.kind);
      }),
    );
  }

  /** Shows (creating if needed) the panel for `spec.key` and recomputes its page. */
  async show(spec: PanelSpec): Promise<void> {
    let p = this.panels.get(spec.key);
    if (p) {
      p.spec = spec;
      p.panel.reveal(undefined, true);
    } else {
      const panel = vscode.window.createWebviewPanel(
        spec.viewType,
        spec.title,
        { viewColumn: vscode.ViewColumn.Beside, preserveFocus: true },
        { enableScripts: true, enableFindWidget: true, localResourceRoots: [] },
      );
      const created = new ResultPanel(spec, panel, this.log);
      p = created;
      this.panels.set(spec.key, created);
      panel.onDidDispose(() => {
        created.dispose();
        if (this.panels.get(spec.key) === created) this.panels.delete(spec.key);
      });
    }
    await p.refresh(true);
  }

  dispose(): void {
    for (const p of this.panels.values()) p.panel.dispose();
    this.panels.clear();
    for (const s of this.subscriptions) s.dispose();
  }
}
