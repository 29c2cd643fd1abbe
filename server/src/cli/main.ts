/**
 * The `poise` command: a thin shell over the analysis core. Reads files, prints results, sets the exit
 * code. User mistakes get a one-line message on stderr and exit code 1 or 2; never a stack trace.
 */
import * as fs from 'fs';
import * as path from 'path';
import { analyze, located, type Analysis } from '../core/pipeline/analysis';
import type { Diagnostic } from '../core/diagnostics';
import { EXPORT_FORMATS, exportChunks, SPARSE_FORMATS, type ExportFormat } from '../core/present/exports';
import { formatLinearText, formatValues } from '../core/present/format';
import { formatSymbolic, symbolicLinear } from '../core/analysis/symbolic';
import { sweepCommand } from './sweep';
import { reportCommand } from './report';

export interface Io {
  out(s: string): void;
  err(s: string): void;
}

const stdio: Io = {
  out: (s) => process.stdout.write(s.endsWith('\n') ? s : s + '\n'),
  err: (s) => process.stderr.write(s.endsWith('\n') ? s : s + '\n'),
};

export const USAGE = `Usage: poise <command> [options]

Commands:
  check FILE...                       report problems (path:line:col: severity CODE: message); exit 1 on any error
  solve FILE [--point NAME]           solve the operating point and print every variable with its unit
  linearize FILE [--point NAME] [--format text|json|csv|markdown|latex|numpy] [--digits N] [--symbolic] [--sparse]
                                      print the deviation equations and A, B, C, D at the point
                                      (--symbolic: coefficients as formulas in the constants and point values;
                                      --sparse: only the non-zero entries, with json, csv or numpy)
  report FILE [--point NAME] [--html OUT.html] [--step INPUT=SIZE] [--format text|json]
                                      dynamics at the point: poles, gains, responses, validity range
  sweep FILE --point NAME --vary NAME=FROM:TO:N [--log] [--format text|json|csv] [--html OUT.html]
  sweep FILE --sweep NAME             linear models across a range of operating points (N steps, N+1 values;
                                      FROM and TO in the declared unit, or with a unit: 50[mm/s])
  lsp --stdio                         run the language server over stdio (for any LSP editor)

Options:
  --help, -h      this text
  --version       print the version`;

class UsageError extends Error {}

export interface Parsed {
  cmd: string;
  files: string[];
  opts: Map<string, string | true>;
}

export function parseArgs(argv: string[]): Parsed {
  const [cmd = '', ...rest] = argv;
  const files: string[] = [];
  const opts = new Map<string, string | true>();
  const flags = new Set(['--log', '--stdio', '--help', '-h', '--symbolic', '--node-ipc', '--sparse']);
  for (let i = 0; i < rest.length; i++) {
    const a = rest[i];
    if (a.startsWith('--') || a === '-h') {
      const eq = a.indexOf('=');
      if (eq > 0) opts.set(a.slice(0, eq), a.slice(eq + 1));
      else if (flags.has(a) || a.startsWith('--clientProcessId')) opts.set(a, true);
      else {
        const v = rest[i + 1];
        if (v === undefined) throw new UsageError(`option ${a} needs a value`);
        // repeated options (e.g. --step) are joined with ';'
        opts.set(a, opts.has(a) ? `${opts.get(a)};${v}` : v);
        i++;
      }
    } else files.push(a);
  }
  return { cmd, files, opts };
}

function readModel(file: string): string {
  try {
    return fs.readFileSync(file, 'utf8');
  } catch (e) {
    const code = (e as NodeJS.ErrnoException).code;
    throw new UsageError(code === 'ENOENT' ? `cannot read ${file}: no such file` : code === 'EISDIR' ? `${file} is a folder, not a model file` : `cannot read ${file}: ${(e as Error).message}`);
  }
}

export function formatDiagnostic(a: Analysis, file: string, d: Diagnostic): string {
  const p = a.lines.position(d.span.start);
  return `${file}:${p.line + 1}:${p.character + 1}: ${d.severity} ${d.code}: ${d.message}`;
}

function sortDiags(ds: Diagnostic[]): Diagnostic[] {
  return [...ds].sort((x, y) => x.span.start - y.span.start || x.code.localeCompare(y.code));
}

/** Loads, analyses and picks the point; prints errors and returns undefined when the job cannot go on. */
function prepare(file: string, pointName: string | undefined, io: Io): { a: Analysis; point: string } | undefined {
  const a = analyze(readModel(file));
  const errors = a.diagnostics.filter((d) => d.severity === 'error');
  if (errors.length) {
    for (const d of sortDiags(errors)) io.err(formatDiagnostic(a, file, d));
    return undefined;
  }
  const names = a.pointNames;
  if (!names.length) {
    io.err(`${file}: no point to solve: add a "point NAME:" block`);
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

function oneFile(p: Parsed): string {
  if (p.files.length !== 1) throw new UsageError(`"poise ${p.cmd}" takes one model file${p.files.length ? `, not ${p.files.length}` : ''}`);
  return p.files[0];
}

export async function main(argv: string[], io: Io = stdio): Promise<number> {
  try {
    const p = parseArgs(argv);
    if (!p.cmd || p.cmd === 'help' || p.opts.has('--help') || p.opts.has('-h') || p.cmd === '--help' || p.cmd === '-h') {
      io.out(USAGE);
      return p.cmd ? 0 : 2;
    }
    if (p.cmd === '--version') {
      io.out(version());
      return 0;
    }
    switch (p.cmd) {
      case 'check': {
        if (!p.files.length) throw new UsageError('"poise check" needs at least one model file');
        let errors = 0;
        for (const f of p.files) {
          const a = analyze(readModel(f));
          const ds = sortDiags(a.allDiagnostics());
          for (const d of ds) io.out(formatDiagnostic(a, f, d));
          errors += ds.filter((d) => d.severity === 'error').length;
        }
        return errors ? 1 : 0;
      }
      case 'solve': {
        const file = oneFile(p);
        const r = prepare(file, opt(p, '--point'), io);
        if (!r) return 1;
        const sol = r.a.point(r.point)!;
        io.out(`Point ${r.point}: solved in ${sol.iterations} Newton iteration(s)`);
        io.out(formatValues(r.a.values(sol), Number(opt(p, '--digits') ?? 6)));
        return 0;
      }
      case 'linearize': {
        const file = oneFile(p);
        const format = opt(p, '--format') ?? 'text';
        if (!['text', ...EXPORT_FORMATS].includes(format)) throw new UsageError(`unknown format "${format}": use text, ${EXPORT_FORMATS.join(', ')}`);
        const sparse = p.opts.has('--sparse');
        if (sparse && !SPARSE_FORMATS.includes(format as ExportFormat)) throw new UsageError(`--sparse needs --format ${SPARSE_FORMATS.join(', ')}`);
        const digits = Number(opt(p, '--digits') ?? (format === 'json' ? 17 : 5));
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
        if (p.opts.has('--symbolic')) io.out(formatSymbolic(symbolicLinear(r.a, r.point)!, digitsOpt));
        else if (format === 'text') io.out(formatLinearText(r.a, lin, values, r.a.deviationEquations(r.point, digits)!, digits));
        else {
          // written as it is produced: pieces of whole lines, never one string of the whole model
          const equations = format === 'json' ? r.a.deviationEquations(r.point, 6) : undefined;
          for (const chunk of exportChunks(lin, values, format as ExportFormat, { digits: digitsOpt, sparse, equations })) io.out(chunk);
        }
        return 0;
      }
      case 'lsp':
        // bin/poise.js starts the language server itself (a separate bundle, so that the other commands
        // do not load the protocol libraries)
        throw new UsageError('start the language server with "poise lsp --stdio" (bin/poise.js)');
      default: {
        const ext = extraCommands[p.cmd];
        if (ext) return await ext(p, io, { readModel, prepare, opt, oneFile, UsageError });
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

export interface CliHelpers {
  readModel: typeof readModel;
  prepare: typeof prepare;
  opt: typeof opt;
  oneFile: typeof oneFile;
  UsageError: typeof UsageError;
}

/** Commands added by other modules (report, sweep): name → handler. */
export const extraCommands: Record<string, (p: Parsed, io: Io, h: CliHelpers) => Promise<number>> = {};
extraCommands.sweep = sweepCommand;
extraCommands.report = reportCommand;

function version(): string {
  try {
    const pkg = JSON.parse(fs.readFileSync(path.join(__dirname, '..', '..', '..', '..', 'package.json'), 'utf8')) as { version: string };
    return pkg.version;
  } catch {
    return 'unknown';
  }
}
