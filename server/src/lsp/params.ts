/**
 * Request parameters checked at the edge: every handler receives what its check returns, or the request is
 * answered with the protocol's invalid-params error (-32602) saying what is wrong. The checks accept what
 * the protocol allows (extra fields, optional fields left out) and nothing the handlers could trip over.
 */
import { EXPORT_FORMAT_NAMES, type ExportParams, type PointAtParams, type PointParams, type SweepParams } from './requests';

/** Malformed parameters; the request guard answers them with InvalidParams. */
export class InvalidParams extends Error {}

export type Check<P> = (raw: unknown) => P;

type Obj = Record<string, unknown>;

function bad(detail: string): never {
  throw new InvalidParams(detail);
}

function object(v: unknown, what: string): Obj {
  if (!v || typeof v !== 'object' || Array.isArray(v)) bad(`${what} must be an object`);
  return v as Obj;
}

function string(v: unknown, what: string): string {
  if (typeof v !== 'string') bad(`${what} must be a string`);
  return v;
}

function optionalString(v: unknown, what: string): string | undefined {
  return v === undefined || v === null ? undefined : string(v, what);
}

function count(v: unknown, what: string): number {
  if (typeof v !== 'number' || !Number.isInteger(v) || v < 0) bad(`${what} must be a whole number ≥ 0`);
  return v;
}

function finite(v: unknown, what: string): number | undefined {
  if (v === undefined || v === null) return undefined;
  if (typeof v !== 'number' || !Number.isFinite(v)) bad(`${what} must be a finite number`);
  return v;
}

export interface Position {
  line: number;
  character: number;
}
export interface Range {
  start: Position;
  end: Position;
}

export function position(v: unknown, what = 'position'): Position {
  const o = object(v, what);
  return { line: count(o.line, `${what}.line`), character: count(o.character, `${what}.character`) };
}

export function range(v: unknown, what = 'range'): Range {
  const o = object(v, what);
  return { start: position(o.start, `${what}.start`), end: position(o.end, `${what}.end`) };
}

/** {textDocument: {uri}} — what every document request carries. */
export const documentParams: Check<{ textDocument: { uri: string } }> = (raw) => {
  const o = object(raw, 'params');
  const td = object(o.textDocument, 'textDocument');
  return { ...o, textDocument: { ...td, uri: string(td.uri, 'textDocument.uri') } };
};

/** {textDocument, position} */
export const positionParams: Check<{ textDocument: { uri: string }; position: Position }> = (raw) => {
  const d = documentParams(raw);
  return { ...d, position: position((raw as Obj).position) };
};

export const referenceParams: Check<{ textDocument: { uri: string }; position: Position; context: { includeDeclaration: boolean } }> = (raw) => {
  const p = positionParams(raw);
  const c = (raw as Obj).context;
  const include = c === undefined || c === null ? true : object(c, 'context').includeDeclaration;
  if (include !== undefined && typeof include !== 'boolean') bad('context.includeDeclaration must be true or false');
  return { ...p, context: { includeDeclaration: include ?? true } };
};

export const renameParams: Check<{ textDocument: { uri: string }; position: Position; newName: string }> = (raw) => {
  const p = positionParams(raw);
  return { ...p, newName: string((raw as Obj).newName, 'newName') };
};

export interface CodeActionParamsChecked {
  textDocument: { uri: string };
  range: Range;
  context: { diagnostics: Obj[]; only?: string[] };
}

export const codeActionParams: Check<CodeActionParamsChecked> = (raw) => {
  const d = documentParams(raw);
  const r = range((raw as Obj).range);
  const c = object((raw as Obj).context, 'context');
  const ds = c.diagnostics;
  if (!Array.isArray(ds)) bad('context.diagnostics must be an array');
  const diagnostics = ds.map((x, i) => {
    const o = object(x, `context.diagnostics[${i}]`);
    range(o.range, `context.diagnostics[${i}].range`);
    return o;
  });
  let only: string[] | undefined;
  if (c.only !== undefined && c.only !== null) {
    if (!Array.isArray(c.only) || !c.only.every((k) => typeof k === 'string')) bad('context.only must be an array of strings');
    only = c.only as string[];
  }
  return { ...d, range: r, context: { ...c, diagnostics, only } };
};

export const executeCommandParams: Check<{ command: string; arguments: unknown[] }> = (raw) => {
  const o = object(raw, 'params');
  const args = o.arguments;
  if (args !== undefined && args !== null && !Array.isArray(args)) bad('arguments must be an array');
  return { command: string(o.command, 'command'), arguments: (args as unknown[] | undefined) ?? [] };
};

// ---- custom requests (server/src/lsp/requests.ts) ------------------------------------------------------

export const pointParams: Check<PointParams> = (raw) => {
  const o = object(raw, 'params (it needs {uri, point})');
  return { uri: string(o.uri, 'uri'), point: optionalString(o.point, 'point') };
};

export const pointAtParams: Check<PointAtParams> = (raw) => {
  const o = object(raw, 'params (it needs {uri, position})');
  return { uri: string(o.uri, 'uri'), position: position(o.position) };
};

export const expandedParams: Check<{ uri: string }> = (raw) => {
  const o = object(raw, 'params (it needs {uri})');
  return { uri: string(o.uri, 'uri') };
};

export const exportParams: Check<ExportParams> = (raw) => {
  const p = pointParams(raw);
  const o = raw as Obj;
  const format = string(o.format, 'format (one of ' + EXPORT_FORMAT_NAMES.join(', ') + ')');
  const digits = finite(o.digits, 'digits');
  if (digits !== undefined && (!Number.isInteger(digits) || digits < 1 || digits > 17)) bad('"digits" must be a whole number from 1 to 17 (or left out for exact numbers)');
  return { ...p, format: format as ExportParams['format'], digits };
};

export const sweepParams: Check<SweepParams> = (raw) => {
  const p = pointParams(raw);
  const o = raw as Obj;
  if (o.log !== undefined && o.log !== null && typeof o.log !== 'boolean') bad('log must be true or false');
  return {
    ...p,
    vary: optionalString(o.vary, 'vary'),
    from: finite(o.from, 'from'),
    to: finite(o.to, 'to'),
    steps: finite(o.steps, 'steps'),
    log: o.log === true,
    sweep: optionalString(o.sweep, 'sweep'),
  };
};

/** For requests without parameters of their own. */
export const anyParams: Check<unknown> = (raw) => raw;
