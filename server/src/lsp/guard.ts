/**
 * The one guard every request handler of the language server runs in:
 *
 * - cancellation is checked before the handler starts and after it ends; a cancelled request is answered
 *   with the protocol's "request cancelled" error (-32800) and no result;
 * - the parameters are checked at the edge (server/src/lsp/params.ts); malformed ones are answered with
 *   the invalid-params error (-32602) saying what is wrong, before the handler sees them;
 * - a deliberate refusal (a ResponseError, a job's refusal) is answered as it is; any other exception is
 *   logged with its stack and answered with an internal error (-32603) — the server never crashes.
 *
 * Notifications get the same protection without an answer (`guardNotification`).
 */
import { ResponseError, type CancellationToken } from 'vscode-languageserver/node';
import { catalogueText } from '../core/diagnostics';
import { JobFailure } from './jobs';
import { Cancelled, OffloadError } from './offload';
import { InvalidParams, type Check } from './params';

export const ErrorCode = {
  InvalidParams: -32602,
  InternalError: -32603,
  /** LSP 3.17 LSPErrorCodes.RequestFailed: the request was well-formed but could not be done. */
  RequestFailed: -32803,
  /** LSP 3.17 LSPErrorCodes.RequestCancelled. */
  RequestCancelled: -32800,
} as const;

export type LogError = (where: string, e: unknown) => void;

export type Handler<P, R> = (params: P, token: CancellationToken) => R | Promise<R>;

const NO_TOKEN: CancellationToken = { isCancellationRequested: false, onCancellationRequested: () => ({ dispose: () => undefined }) };

function cancelled(method: string): ResponseError<void> {
  return new ResponseError(ErrorCode.RequestCancelled, catalogueText('P809', { method }));
}

/** The answer a failure turns into. */
export function toResponseError(method: string, e: unknown, logError: LogError): ResponseError<void> {
  if (e instanceof ResponseError) return e;
  if (e instanceof Cancelled) return cancelled(method);
  if (e instanceof InvalidParams) return new ResponseError(ErrorCode.InvalidParams, catalogueText('P807', { method, detail: e.message }));
  if (e instanceof JobFailure || (e instanceof OffloadError && e.failure)) return new ResponseError(ErrorCode.RequestFailed, e.message);
  logError(method, e);
  const detail = e instanceof Error ? e.message : String(e);
  return new ResponseError(ErrorCode.InternalError, catalogueText('P808', { method, detail }));
}

/** Wraps a request handler in the guard (see above). */
export function guard<P, R>(method: string, check: Check<P>, handler: Handler<P, R>, logError: LogError) {
  return async (raw: unknown, token?: CancellationToken): Promise<R> => {
    const t = token ?? NO_TOKEN;
    if (t.isCancellationRequested) throw cancelled(method);
    let result: R;
    try {
      result = await handler(check(raw), t);
    } catch (e) {
      throw toResponseError(method, e, logError);
    }
    if (t.isCancellationRequested) throw cancelled(method);
    return result;
  };
}

/** Wraps a notification handler: failures are logged, never thrown. */
export function guardNotification<P>(method: string, handler: (params: P) => void | Promise<void>, logError: LogError) {
  return (params: P): void => {
    try {
      const r = handler(params);
      if (r instanceof Promise) r.catch((e: unknown) => logError(method, e));
    } catch (e) {
      logError(method, e);
    }
  };
}
