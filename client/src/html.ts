// Pure helpers for the webview pages (no `vscode` import, so they can be tested without an editor).
//
// Content-Security-Policy of every Poise webview (reports and sweeps):
//   default-src 'none'                  nothing is loaded unless listed below; no remote sources at all
//   img-src data: blob:                 images only from data:/blob: URLs (inline SVG needs no permission)
//   font-src data:                      fonts only when embedded as data: URLs
//   style-src 'unsafe-inline'           <style> blocks and style="" attributes written by the server
//   script-src 'nonce-N'                only the page's own <script> (declared by its hash in the page's policy),
//                                       which we stamp with a fresh nonce
// Consequences for the HTML the server sends: its one script must be an inline <script> block whose hash
// the page's own policy lists (secureHtml below); inline event-handler attributes (onclick="...") and javascript: URLs do not run; nothing is
// fetched from the network. The page may use the editor's theme through the CSS variables
// (--vscode-editor-foreground, --vscode-editor-background, --vscode-font-family, ...) and the body classes
// `vscode-light`, `vscode-dark`, `vscode-high-contrast` that the editor sets; when the colour theme changes the
// page also receives a message {type: 'poise.theme', kind: 'light' | 'dark' | 'high-contrast' | 'high-contrast-light'}.

import { createHash, randomBytes } from 'crypto';

export function makeNonce(): string {
  return randomBytes(18).toString('base64').replace(/[+/=]/g, '');
}

export function contentSecurityPolicy(nonce: string): string {
  return [
    "default-src 'none'",
    'img-src data: blob:',
    'font-src data:',
    "style-src 'unsafe-inline'",
    `script-src 'nonce-${nonce}'`,
  ].join('; ');
}

/** Base style placed before the page's own styles, so that an unstyled page follows the editor theme. */
const BASE_STYLE =
  '<style>body{color:var(--vscode-editor-foreground);background:var(--vscode-editor-background);' +
  'font-family:var(--vscode-font-family);font-size:var(--vscode-font-size)}</style>';

export function escapeHtml(text: string): string {
  return text.replace(/[&<>"']/g, (c) => `&#${c.charCodeAt(0)};`);
}

/** The SHA-256 of a text's UTF-8 bytes as a CSP source expression ('sha256-…'). */
export function cspHash(text: string): string {
  return `'sha256-${createHash('sha256').update(text, 'utf8').digest('base64')}'`;
}

const CSP_META = /<meta\b[^>]*http-equiv\s*=\s*["']?content-security-policy["']?[^>]*>/gi;

/**
 * Returns `html` with our CSP meta element and base style as the first children of <head>, and the nonce on
 * the page's own script only: the page declares it by its hash in its own policy (the standalone page's
 * `script-src 'sha256-…'`, server/src/core/present/svgCharts.ts). Any other inline script, and every script
 * with a `src`, gets no nonce and so stays blocked. The page's own policy is replaced by ours (it was
 * written for the page opened as a file).
 */
export function secureHtml(html: string, nonce: string): string {
  const head = `<meta http-equiv="Content-Security-Policy" content="${contentSecurityPolicy(nonce)}">${BASE_STYLE}`;
  const declared = new Set<string>();
  for (const meta of html.match(CSP_META) ?? []) {
    const content = /\bcontent\s*=\s*"([^"]*)"/i.exec(meta)?.[1] ?? '';
    for (const m of content.replace(/&#39;|&apos;/g, "'").matchAll(/'sha256-[A-Za-z0-9+/=]+'/g)) declared.add(m[0]);
  }
  let out = html.replace(CSP_META, '');
  out = out.replace(/<script\b([^>]*)>([\s\S]*?)<\/script>/gi, (_whole: string, attrs: string, body: string) => {
    const clean = attrs.replace(/\snonce\s*=\s*("[^"]*"|'[^']*'|[^\s>]*)/gi, '');
    if (/\bsrc\s*=/i.test(attrs) || !declared.has(cspHash(body))) return `<script${clean}>${body}</script>`;
    return `<script nonce="${nonce}"${clean}>${body}</script>`;
  });
  if (/<head\b[^>]*>/i.test(out)) {
    out = out.replace(/<head\b[^>]*>/i, (m) => m + head);
  } else if (/<html\b[^>]*>/i.test(out)) {
    out = out.replace(/<html\b[^>]*>/i, (m) => `${m}<head>${head}</head>`);
  } else {
    out = `<!DOCTYPE html><html><head>${head}</head><body>${out}</body></html>`;
  }
  return out;
}

/** A small page shown while the first result is computed or when it could not be computed. */
export function messagePage(title: string, message: string, isError: boolean): string {
  const colour = isError ? 'var(--vscode-errorForeground)' : 'var(--vscode-descriptionForeground)';
  return (
    `<!DOCTYPE html><html><head><meta charset="utf-8"><title>${escapeHtml(title)}</title></head>` +
    `<body><h3>${escapeHtml(title)}</h3><pre style="white-space:pre-wrap;color:${colour}">` +
    `${escapeHtml(message)}</pre></body></html>`
  );
}
