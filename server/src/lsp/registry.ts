/**
 * Custom requests other modules add to the language server (poise/report, poise/sweep, poise/export, …).
 * Kept apart from server.ts so a module can import `registerRequest` without importing the server.
 */
import type { CancellationToken, Connection, TextDocuments } from 'vscode-languageserver/node';
import type { TextDocument } from 'vscode-languageserver-textdocument';
import type { Analysis } from '../core/pipeline/analysis';
import type { PoiseSettings } from './settings';

/** What a custom request handler can use. */
export interface ServerContext {
  readonly connection: Connection;
  readonly documents: TextDocuments<TextDocument>;
  /** Analysis of an open document at its current version (cached per URI and version); undefined when not open. */
  analysis(uri: string): Analysis | undefined;
  /** The document's `poise` settings (digits, activePoint, warnUnused). */
  settings(uri: string): Promise<PoiseSettings>;
  /** Writes a line to the client's log (window/logMessage). */
  log(message: string): void;
}

export type RequestHandler<P = any, R = unknown> = (params: P, ctx: ServerContext, token: CancellationToken) => R | Promise<R>; // eslint-disable-line @typescript-eslint/no-explicit-any

const handlers = new Map<string, RequestHandler>();
let attach: ((method: string, handler: RequestHandler) => void) | undefined;

/**
 * Adds (or replaces) the handler of a custom request. Works before or after startServer(). A handler that
 * throws answers the request with a JSON-RPC error carrying the message; the server keeps running.
 */
export function registerRequest<P, R>(method: string, handler: RequestHandler<P, R>): void {
  handlers.set(method, handler as RequestHandler);
  attach?.(method, handler as RequestHandler);
}

/** For the server: every handler registered so far, and a hook for later registrations. */
export function takeRegistrations(hook: (method: string, handler: RequestHandler) => void): void {
  attach = hook;
  for (const [m, h] of handlers) hook(m, h);
}
