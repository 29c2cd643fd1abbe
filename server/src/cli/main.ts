/**
 * The `poise` command: a thin shell over the analysis core. Reads files, prints results, sets the exit
 * code. User mistakes get a one-line message on stderr and exit code 1 or 2; never a stack trace.
 */
import * as fs from 'fs';
import * as path from 'path';
import { analyzeDocuments, located, type Analysis } from '../core/pipeline/analysis';
import { catalogueText, type Diagnostic } from '../core/diagnostics';
import { exportChunks, SPARSE_FORMATS, type ExportFormat } from '../core/present/exports';
import { formatLinearText, formatValues } from '../core/present/format';
import { formatSymbolic, symbolicLinear } from '../core/analysis/symbolic';
import { sweepCommand } from './sweep';
import { expandCommand } from './expand';
import { sensitivityCommand } from './sensitivity';
import { reportCommand } from './report';
import { reduceCommand, sampleCommand } from './handoff';
import { commandHelp, commandSpec, generalHelp, nearest as nearestWord, parseCommandLine, UsageError, type Parsed } from './options';
import { diagnosticJson, type DiagnosticJson } from './diagnosticJson';
import type { CliHelpers, Io } from './shared';
import { cliSources } from './sourceHost';
import { formatDiagnostic } from './where';
export { formatDiagnostic } from './where';

export type { CliHelpers, Io } from './shared';

const stdio: Io = {
  out: (s) => process.stdout.write(s.endsWith('\n') ? s : s + '\n'),
  err: (s) => process.stderr.write(s.endsWith('\n') ? s : s + '\n'),
};

export { USAGE_TEXT as USAGE };
const USAGE_TEXT = generalHelp();

export type { Parsed };
export { UsageError };

/** Parses and validates the command line against the option tables (options.ts). */
export function parseArgs(argv: string[]): Parsed {
  return parseCommandLine(argv);
}

function readModel(file: string): string {
  try {
    return fs.readFileSync(file, 'utf8');
  } catch (e) {
    const code = (e as NodeJS.ErrnoException).code;
    throw new UsageError(code === 'ENOENT' ? `cannot read ${file}: no such file` : code === 'EISDIR' ? `${file} is a folder, not a model file` : `cannot read ${file}: ${(e as Error).message}`);
  }
}

function sortDiags(ds: Diagnostic[]): Diagnostic[] {
  return [...ds].sort((x, y) => x.span.start - y.span.start || x.code.localeCompare(y.code));
}

/** Loads, analyses and picks the point; prints errors and returns undefined when the job cannot go on. */
function prepare(file: string, pointName: string | undefined, io: Io): { a: Analysis; point: string } | undefined {
  return preparePoint(analyzeDocuments(cliSources(file, readModel(file)), file)!, file, pointName, io);
}

/** prepare() on an analysis already made. */
function preparePoint(a: Analysis, file: string, pointName: string | undefined, io: Io): { a: Analysis; point: string } | undefined {
  const errors = a.diagnostics.filter((d) => d.severity === 'error');
  if (errors.length) {
    for (const d of sortDiags(errors)) io.err(formatDiagnostic(a, file, d));
    return undefined;
  }
  const names = a.pointNames;
  if (!names.length) {
    io.err(`${file}: ${catalogueText('P509')}`);
    return undefined;
  }
  if (pointName !== undefined && !names.includes(pointName)) {
    io.err(`${file}: no point named "${pointName}"; the file has ${names.map((n) => `"${n}"`).join(', ')}`);
    return undefined;
  }
  if (pointName === undefined && names.length > 1) {
    io.err(`${file}: the file has ${names.length} points (${names.join(', ')}); choose one with --point NAME`);
    return undefined;
  }
  const point = pointName ?? names[0];
  const sol = a.point(point)!;
  const bad = sol.diagnostics.filter((d) => d.severity === 'error');
  for (const d of sortDiags(sol.diagnostics)) io.err(formatDiagnostic(a, file, d));
  if (bad.length || !sol.ok) return undefined;
  return { a, point };
}

function opt(p: Parsed, name: string): string | undefined {
  const v = p.opts.get(name);
  if (v === true) throw new UsageError(`option ${name} needs a value`);
  return v;
}

/** Every value of a repeatable option, in order. */
function all(p: Parsed, name: string): string[] {
  return p.lists.get(name) ?? [];
}

/** The --digits option (validated 1..17 by the option table) or the default. */
function digitsOf(p: Parsed, fallback: number): number {
  const d = opt(p, '--digits');
  return d === undefined ? fallback : Number(d);
}

function oneFile(p: Parsed): string {
  if (p.files.length !== 1) throw new UsageError(`"poise ${p.cmd}" takes one model file${p.files.length ? `, not ${p.files.length}` : ''}`);
  return p.files[0];
}

function checkCommand(p: Parsed, io: Io): number {
  const json = opt(p, '--format') === 'json';
  const quiet = p.opts.has('--quiet');
  let failed = false;
  const files: { file: string; ok: boolean; error?: string; diagnostics: DiagnosticJson[] }[] = [];
  for (const f of p.files) {
    let text: string;
    try {
      text = readModel(f);
    } catch (e) {
      // an unreadable file does not stop the others; it makes the run fail
      failed = true;
      if (json) files.push({ file: f, ok: false, error: (e as Error).message, diagnostics: [] });
      else io.err(`poise: ${(e as Error).message}`);
      continue;
    }
    const a = analyzeDocuments(cliSources(f, text), f)!;
    const ds = sortDiags(a.allDiagnostics());
    const errors = ds.filter((d) => d.severity === 'error').length;
    if (errors) failed = true;
    if (json) files.push({ file: f, ok: errors === 0, diagnostics: ds.map((d) => diagnosticJson(a, f, d)) });
    else {
      // problems only: information (e.g. an index reduction, P407) is in the JSON and the editor
      const problems = ds.filter((d) => d.severity !== 'info');
      for (const d of problems) io.out(formatDiagnostic(a, f, d));
      if (!problems.length && !quiet) io.out(`${f}: ok`);
    }
  }
  if (json) io.out(JSON.stringify({ schema: 'poise-check/1', ok: !failed, files }, null, 1));
  return failed ? 1 : 0;
}

function solveCommand(p: Parsed, io: Io): number {
  const file = oneFile(p);
  // JSON is for programs: every digit unless --digits asks for fewer
  const digits = digitsOf(p, opt(p, '--format') === 'json' ? 17 : 6);
  if (opt(p, '--format') !== 'json') {
    const r = prepare(file, opt(p, '--point'), io);
    if (!r) return 1;
    const sol = r.a.point(r.point)!;
    io.out(`Point ${r.point}: solved in ${sol.iterations} Newton iteration(s), relative residual ${sol.residual.toExponential(1)}`);
    io.out(formatValues(r.a.values(sol), digits));
    return 0;
  }
  // json: the values, or the diagnostics with their ranges, on stdout; the exit code says which
  const errs: string[] = [];
  const sink: Io = { out: () => undefined, err: (s) => errs.push(s) };
  const a = analyzeDocuments(cliSources(file, readModel(file)), file)!;
  const r = preparePoint(a, file, opt(p, '--point'), sink);
  const sol = r ? a.point(r.point) : undefined;
  const pointDiags = sol ? sol.diagnostics : opt(p, '--point') !== undefined || a.pointNames.length === 1 ? (a.point(opt(p, '--point') ?? a.pointNames[0])?.diagnostics ?? []) : [];
  const diagnostics = sortDiags([...a.diagnostics, ...(a.diagnostics.some((d) => d.severity === 'error') ? [] : pointDiags)]).map((d) => diagnosticJson(a, file, d));
  const values = Object.create(null) as Record<string, { value: number; unit: string; role: string }>; // keyed by the model's names (__proto__ too)
  if (r && sol) for (const v of r.a.values(sol)) if (v.kind !== 'const') values[v.name] = { value: Number(v.value.toPrecision(digits)), unit: v.unit, role: v.role };
  const out = {
    schema: 'poise-solve/1',
    file,
    ok: !!r,
    point: r?.point ?? opt(p, '--point') ?? null,
    iterations: sol?.iterations ?? null,
    // achieved relative residual of the solved point (PointSolution.residual); null when it did not solve
    residual: r && sol ? sol.residual : null,
    values,
    diagnostics,
    // problems that are not about a place in the file (no point, several points, an unknown point name)
    messages: r ? [] : errs.filter((m) => !diagnostics.some((d) => m.endsWith(d.message))),
  };
  io.out(JSON.stringify(out, null, 1));
  return r ? 0 : 1;
}

function linearizeCommand(p: Parsed, io: Io): number {
  const file = oneFile(p);
  const format = opt(p, '--format') ?? 'text';
  const sparse = p.opts.has('--sparse');
  if (sparse && !SPARSE_FORMATS.includes(format as ExportFormat)) throw new UsageError(`--sparse needs --format ${SPARSE_FORMATS.join(', ')}`);
  const digits = digitsOf(p, format === 'json' ? 17 : 5);
  const r = prepare(file, opt(p, '--point'), io);
  if (!r) return 1;
  const lin = r.a.linear(r.point);
  if (!lin || !lin.ok) {
    for (const d of lin?.diagnostics ?? []) io.err(formatDiagnostic(r.a, file, d));
    return 1;
  }
  const sol = r.a.point(r.point)!;
  const values = r.a.values(sol);
  const digitsOpt = opt(p, '--digits') === undefined ? undefined : digits;
  const eigenvalues = p.opts.has('--eigenvalues') ? true : undefined; // otherwise when cheap (format.ts eigenWork)
  if (p.opts.has('--symbolic')) io.out(formatSymbolic(symbolicLinear(r.a, r.point)!, digitsOpt));
  else if (format === 'text') io.out(formatLinearText(r.a, lin, values, r.a.deviationEquations(r.point, digits)!, digits, eigenvalues));
  else {
    // written as it is produced: pieces of whole lines, never one string of the whole model; the
    // deviation equations (JSON only) computed once
    const equations = format === 'json' ? r.a.deviationEquations(r.point, 6) : undefined;
    for (const chunk of exportChunks(lin, values, format as ExportFormat, { digits: digitsOpt, sparse, equations, eigenvalues, solve: { iterations: sol.iterations, residual: sol.residual } })) io.out(chunk);
  }
  return 0;
}

export async function main(argv: string[], io: Io = stdio): Promise<number> {
  try {
    const [first] = argv;
    if (first === undefined || first === 'help' || first === '--help' || first === '-h') {
      const topic = first === 'help' ? commandSpec(argv[1] ?? '') : undefined;
      io.out(topic ? commandHelp(topic) : USAGE_TEXT);
      return first === undefined ? 2 : 0;
    }
    if (first === '--version' || first === '-v') {
      io.out(version());
      return 0;
    }
    const spec = commandSpec(first);
    if (!spec) {
      if (first.startsWith('-')) throw new UsageError(`"${first}" is not a command; give the command first (run "poise --help")`);
      const near = nearestCommand(first);
      throw new UsageError(`unknown command "${first}"${near ? `; did you mean "${near}"?` : ''} (run "poise --help")`);
    }
    const p = parseCommandLine(argv);
    if (p.opts.has('--help')) {
      io.out(commandHelp(spec));
      return 0;
    }
    switch (p.cmd) {
      case 'check':
        return checkCommand(p, io);
      case 'solve':
        return solveCommand(p, io);
      case 'linearize':
        return linearizeCommand(p, io);
      case 'lsp':
        // bin/poise.js starts the language server itself (a separate bundle, so that the other commands
        // do not load the protocol libraries) when a transport is given
        if (!p.opts.has('--stdio') && !p.opts.has('--node-ipc')) {
          throw new UsageError('"poise lsp" needs a transport: run "poise lsp --stdio" from your editor\'s language-client settings (see "poise lsp --help")');
        }
        throw new UsageError('the language server is started by the poise command itself: run "poise lsp --stdio"');
      default: {
        const ext = extraCommands[p.cmd];
        if (ext) return await ext(p, io, { readModel, prepare, opt, all, digitsOf, oneFile, formatDiagnostic, UsageError });
        throw new UsageError(`unknown command "${p.cmd}"; run "poise --help"`);
      }
    }
  } catch (e) {
    if (e instanceof UsageError) {
      io.err(`poise: ${e.message}`);
      return 2;
    }
    throw e;
  }
}

function nearestCommand(word: string): string | undefined {
  const names = ['check', 'solve', 'linearize', 'report', 'sweep', 'sensitivity', 'expand', 'sample', 'reduce', 'lsp', 'help'];
  return names.find((n) => n.startsWith(word) && word.length >= 2) ?? nearestWord(word, names);
}

/** Commands added by other modules (report, sweep): name → handler. */
export const extraCommands: Record<string, (p: Parsed, io: Io, h: CliHelpers) => Promise<number>> = {};
extraCommands.sweep = sweepCommand;
extraCommands.report = reportCommand;
extraCommands.expand = expandCommand;
extraCommands.sample = sampleCommand;
extraCommands.reduce = reduceCommand;
extraCommands.sensitivity = sensitivityCommand;

/** The version: injected into the bundle at build time (scripts/bundle.mjs), else read from package.json. */
declare const POISE_VERSION: string | undefined;
export function version(): string {
  if (typeof POISE_VERSION === 'string') return POISE_VERSION;
  for (const up of [['..', '..', '..'], ['..', '..', '..', '..']]) {
    try {
      const pkg = JSON.parse(fs.readFileSync(path.join(__dirname, up.join('/'), 'package.json'), 'utf8')) as { name?: string; version: string };
      if (pkg.name === 'poise') return pkg.version;
    } catch {
      /* try the next place */
    }
  }
  return 'unknown';
}
