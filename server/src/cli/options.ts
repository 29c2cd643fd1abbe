/**
 * The command line as data: one declarative table per command (its options with name, value kind and
 * help text). The same table parses the arguments, validates them (before any output) and prints
 * `poise COMMAND --help` and `poise --help`. Unknown or misspelt options (with the nearest known one
 * suggested) and options that belong to another command are usage errors (exit code 2).
 */
import { maxOf, pushAll } from '../core/arrays';

/** What an option takes: nothing (a flag), free text, a choice of words, or a whole number in a range. */
export type ValueKind =
  | { kind: 'flag' }
  | { kind: 'text'; placeholder: string; repeat?: boolean }
  | { kind: 'choice'; choices: readonly string[] }
  | { kind: 'integer'; placeholder: string; min: number; max: number };

export interface OptionSpec {
  name: string;
  value: ValueKind;
  help: string;
  /** Default shown in the help text. */
  default?: string;
}

export interface CommandSpec {
  name: string;
  /** Positional arguments as shown in the usage line, e.g. "FILE..." */
  args: string;
  /** Smallest and largest number of positional arguments (files). */
  files: [number, number];
  summary: string;
  options: OptionSpec[];
  /** Lines printed after the options in the command's own help. */
  notes?: string[];
  /** Options the command does not take, with what to write instead (an old habit, a word of the model language). */
  instead?: Record<string, string>;
}

export class UsageError extends Error {}

const flag: ValueKind = { kind: 'flag' };
const text = (placeholder: string, repeat = false): ValueKind => ({ kind: 'text', placeholder, repeat });
const choice = (...choices: string[]): ValueKind => ({ kind: 'choice', choices });
const DIGITS: ValueKind = { kind: 'integer', placeholder: 'N', min: 1, max: 17 };

const POINT: OptionSpec = { name: '--point', value: text('NAME'), help: 'the point to use (needed when the file has several)' };
const HELP: OptionSpec = { name: '--help', value: flag, help: 'this command\'s help' };

// the hand-off models (poise sample, poise reduce, and their sections in poise report)
const EVERY: OptionSpec = { name: '--every', value: text('T'), help: 'the sample time, in the model\'s time unit or with a unit (30[s])' };
const HOLD: OptionSpec = { name: '--hold', value: choice('zoh', 'foh', 'tustin'), help: 'zoh (input held between samples), foh (input ramped between samples) or tustin (bilinear map)', default: 'zoh' };
const DELAY: OptionSpec = { name: '--delay', value: text('F'), help: 'input delay as a fraction of a sample, 0 to below 1, or a percentage (35%); zoh only', default: '0' };
const ORDER: OptionSpec = { name: '--order', value: { kind: 'integer', placeholder: 'N', min: 0, max: 100000 }, help: 'stable states to keep (unstable ones are always kept)' };
const WITHIN: OptionSpec = { name: '--within', value: text('REL'), help: 'keep the fewest states whose error bound is below REL·σ1 (1e-3, or 0.1%)', default: '1e-3' };

export const LINEARIZE_FORMATS = ['text', 'json', 'csv', 'markdown', 'latex', 'numpy'] as const;

export const COMMANDS: CommandSpec[] = [
  {
    name: 'check',
    args: 'FILE...',
    files: [1, Infinity],
    summary: 'report problems in each file (path:line:col: severity CODE: message, "FILE: ok" when clean); exit 1 on any error or unreadable file',
    options: [
      { name: '--format', value: choice('text', 'json'), help: 'text, or json: every diagnostic with its range (schema poise-check/1)', default: 'text' },
      { name: '--quiet', value: flag, help: 'print nothing for clean files' },
      HELP,
    ],
  },
  {
    name: 'solve',
    args: 'FILE',
    files: [1, 1],
    summary: 'solve the operating point and print every variable with its unit',
    options: [
      POINT,
      { name: '--format', value: choice('text', 'json'), help: 'text, or json: the values with units and any diagnostics with ranges (schema poise-solve/1)', default: 'text' },
      { name: '--digits', value: DIGITS, help: 'significant digits of the printed values, 1 to 17', default: '6; 17 for json' },
      HELP,
    ],
  },
  {
    name: 'linearize',
    args: 'FILE',
    files: [1, 1],
    summary: 'print the deviation equations and A, B, C, D at the point',
    options: [
      POINT,
      { name: '--format', value: { kind: 'choice', choices: LINEARIZE_FORMATS }, help: 'the output format (docs/exports.md)', default: 'text' },
      { name: '--digits', value: DIGITS, help: 'significant digits, 1 to 17', default: '5; 17 for json' },
      { name: '--symbolic', value: flag, help: 'coefficients as formulas in the constants and point values' },
      { name: '--sparse', value: flag, help: 'only the non-zero entries of A, B, C, D (json, csv, numpy; docs/exports.md)' },
      HELP,
    ],
  },
  {
    name: 'report',
    args: 'FILE',
    files: [1, 1],
    summary: 'dynamics at the point: poles, gains, responses, validity range',
    options: [
      POINT,
      { name: '--html', value: text('OUT.html'), help: 'also write the standalone report page' },
      { name: '--step', value: text('INPUT=SIZE', true), help: 'step size of an input: a number in its declared unit, with a unit (0.5[L/s]) or a percentage of its value (5%); repeatable' },
      { name: '--tolerance', value: text('PCT'), help: 'how far the linear prediction may differ for the validity range, in percent', default: '5' },
      { name: '--quick', value: flag, help: 'leave out the validity search and cap the nonlinear simulations at a work budget; the report lists what it left out' },
      { name: '--format', value: choice('text', 'json'), help: 'text, or json (schema poise-report/1)', default: 'text' },
      { ...EVERY, help: 'add the sampled-data model for this sample time (model time unit, or with a unit: 30[s])' },
      HOLD,
      DELAY,
      { name: '--reduce', value: flag, help: 'add the smaller model by balanced truncation (order from --order or --within)' },
      ORDER,
      WITHIN,
      HELP,
    ],
  },
  {
    name: 'sweep',
    args: 'FILE',
    files: [1, 1],
    summary: 'linear models across a range of operating points',
    options: [
      POINT,
      { name: '--vary', value: text('"NAME = FROM to TO steps N [log]"'), help: 'what to vary and over which range, in the words of a declared sweep (docs/sweeps.md)' },
      { name: '--sweep', value: text('NAME'), help: 'run the sweep declared in the file under this name' },
      { name: '--format', value: choice('text', 'json', 'csv'), help: 'the output format', default: 'text' },
      { name: '--html', value: text('OUT.html'), help: 'also write the standalone sweep page' },
      { name: '--digits', value: DIGITS, help: 'significant digits of the text and page, 1 to 17', default: '5' },
      HELP,
    ],
    instead: { '--log': 'write "log" at the end of --vary, e.g. --vary "feed = 0.01 to 0.05 steps 40 log"' },
    notes: [
      'Without --vary or --sweep, runs the only sweep the file declares.',
      'FROM and TO are numbers in the declared unit of NAME, or with a unit: belt = 50 [mm/s] to 3 [m/s] steps 60.',
    ],
  },
  {
    name: 'sensitivity',
    args: 'FILE',
    files: [1, 1],
    summary: 'how the poles and gains move with each constant, and their bands from the tolerances written in the model',
    options: [
      POINT,
      { name: '--top', value: { kind: 'integer', placeholder: 'N', min: 1, max: 1000 }, help: 'constants listed per mode and per gain', default: '5' },
      { name: '--samples', value: { kind: 'integer', placeholder: 'N', min: 0, max: 1000000 }, help: 'Latin hypercube samples of the toleranced constants (0: first-order bands only)', default: '1000' },
      { name: '--seed', value: { kind: 'integer', placeholder: 'N', min: 0, max: 4294967295 }, help: 'seed of the samples (the same seed gives the same samples)', default: '1' },
      { name: '--workers', value: { kind: 'integer', placeholder: 'N', min: 1, max: 64 }, help: 'worker threads that evaluate the samples', default: 'the number of cores, at most 8' },
      { name: '--format', value: choice('text', 'json'), help: 'text, or json (schema poise-sensitivity/1)', default: 'text' },
      { name: '--html', value: text('OUT.html'), help: 'also write a page with the tables and the pole cloud' },
      HELP,
    ],
    notes: ['Tolerances are written after a constant\'s value: const cv = 0.0045 [m^2.5/s] ± 8 % (or +/- 0.0004 [m^2.5/s]); see docs/language.md.'],
  },
  {
    name: 'expand',
    args: 'FILE',
    files: [1, 1],
    summary: 'print the flat model a file with indexed families or parts stands for (valid model text)',
    options: [HELP],
  },
  {
    name: 'sample',
    args: 'FILE',
    files: [1, 1],
    summary: 'the discrete-time model of the linear one for a sample time: matrices, poles in z, stability inside the unit circle',
    options: [
      POINT,
      EVERY,
      HOLD,
      DELAY,
      { name: '--format', value: { kind: 'choice', choices: LINEARIZE_FORMATS }, help: 'the output format (docs/exports.md)', default: 'text' },
      { name: '--digits', value: DIGITS, help: 'significant digits, 1 to 17', default: '5; every digit in the exports' },
      HELP,
    ],
    notes: ['Methods: docs/dynamics.md, "Sampled-data models".'],
  },
  {
    name: 'reduce',
    args: 'FILE',
    files: [1, 1],
    summary: 'a smaller model by balanced truncation: Hankel singular values, error bound, suggested order',
    options: [
      POINT,
      ORDER,
      WITHIN,
      { name: '--format', value: { kind: 'choice', choices: LINEARIZE_FORMATS }, help: 'the output format (docs/exports.md)', default: 'text' },
      { name: '--digits', value: DIGITS, help: 'significant digits, 1 to 17', default: '5; every digit in the exports' },
      HELP,
    ],
    notes: ['Methods: docs/dynamics.md, "Smaller models".'],
  },
  {
    name: 'lsp',
    args: '',
    files: [0, 0],
    summary: 'run the language server over stdio (for any LSP editor)',
    options: [
      { name: '--stdio', value: flag, help: 'talk the Language Server Protocol over standard input and output' },
      { name: '--node-ipc', value: flag, help: 'talk over a Node IPC channel (used by the VS Code extension)' },
      { name: '--clientProcessId', value: text('PID'), help: 'the editor\'s process id (stop when it exits)' },
      HELP,
    ],
  },
];

export const commandSpec = (name: string): CommandSpec | undefined => COMMANDS.find((c) => c.name === name);

export interface Parsed {
  cmd: string;
  files: string[];
  /** Option name → its value (the last one given), or true for a flag. */
  opts: Map<string, string | true>;
  /** Option name → every value given (repeatable options). */
  lists: Map<string, string[]>;
}

/** Edit distance (insertions, deletions, substitutions, swaps of neighbours). */
export function editDistance(a: string, b: string): number {
  const d: number[][] = Array.from({ length: a.length + 1 }, (_, i) => Array.from({ length: b.length + 1 }, (_, j) => (i === 0 ? j : j === 0 ? i : 0)));
  for (let i = 1; i <= a.length; i++) {
    for (let j = 1; j <= b.length; j++) {
      const c = a[i - 1] === b[j - 1] ? 0 : 1;
      d[i][j] = Math.min(d[i - 1][j] + 1, d[i][j - 1] + 1, d[i - 1][j - 1] + c);
      if (i > 1 && j > 1 && a[i - 1] === b[j - 2] && a[i - 2] === b[j - 1]) d[i][j] = Math.min(d[i][j], d[i - 2][j - 2] + 1);
    }
  }
  return d[a.length][b.length];
}

/** The nearest of `names` to `word` when it is close enough to be a slip of the keyboard. */
export function nearest(word: string, names: string[]): string | undefined {
  let best: string | undefined;
  let bestD = Infinity;
  for (const n of names) {
    const dist = editDistance(word.toLowerCase(), n.toLowerCase());
    if (dist < bestD) {
      bestD = dist;
      best = n;
    }
  }
  const bare = word.replace(/^-+/, '');
  const limit = bare.length <= 4 ? 1 : bare.length <= 8 ? 2 : 3;
  if (best !== undefined && bestD <= limit) return best;
  // a unique prefix ("--tol" for "--tolerance")
  const pre = names.filter((n) => n.startsWith(word) && word.replace(/^-+/, '').length >= 2);
  return pre.length === 1 ? pre[0] : undefined;
}

function validateValue(cmd: string, o: OptionSpec, v: string): void {
  const k = o.value;
  if (k.kind === 'choice' && !k.choices.includes(v)) {
    const near = nearest(v, [...k.choices]);
    throw new UsageError(`${o.name} of "poise ${cmd}" takes ${listWords(k.choices)}, not "${v}"${near ? ` (did you mean ${near}?)` : ''}`);
  }
  if (k.kind === 'integer') {
    const n = Number(v);
    if (!/^\s*[-+]?\d+\s*$/.test(v) || !Number.isInteger(n) || n < k.min || n > k.max) {
      throw new UsageError(`${o.name} takes a whole number from ${k.min} to ${k.max}, not "${v}"`);
    }
  }
  if (k.kind === 'text' && !v.trim()) throw new UsageError(`${o.name} needs a value: ${k.placeholder}`);
}

const listWords = (ws: readonly string[]): string => (ws.length <= 1 ? ws.join('') : `${ws.slice(0, -1).join(', ')} or ${ws[ws.length - 1]}`);

/**
 * Parses and validates a command line against the table. Throws UsageError for anything the table does
 * not allow; `--help`/`-h` anywhere is recorded as the flag --help and skips the checks of files.
 */
export function parseCommandLine(argv: string[]): Parsed {
  const [cmd = '', ...rest] = argv;
  const p: Parsed = { cmd, files: [], opts: new Map(), lists: new Map() };
  const spec = commandSpec(cmd);
  if (!spec) return p; // the caller reports unknown commands (and handles --help / --version)
  const known = new Map(spec.options.map((o) => [o.name, o]));
  for (let i = 0; i < rest.length; i++) {
    const a = rest[i];
    if (a === '-h') {
      p.opts.set('--help', true);
      continue;
    }
    if (!a.startsWith('-') || a === '-' || /^-\d/.test(a)) {
      p.files.push(a);
      continue;
    }
    const eq = a.indexOf('=');
    const name = eq > 0 ? a.slice(0, eq) : a;
    const o = known.get(name);
    if (!o) {
      if (spec.instead?.[name]) throw new UsageError(`"poise ${cmd}" takes no option ${name}: ${spec.instead[name]}`);
      const others = COMMANDS.filter((c) => c.name !== cmd && c.options.some((x) => x.name === name)).map((c) => c.name);
      if (others.length) {
        throw new UsageError(`option ${name} does not apply to "poise ${cmd}" (it belongs to ${listWords(others.map((c) => `"poise ${c}"`))}); see "poise ${cmd} --help"`);
      }
      const near = nearest(name, [...known.keys()]);
      throw new UsageError(`unknown option ${name} for "poise ${cmd}"${near ? `; did you mean ${near}?` : ''} (see "poise ${cmd} --help")`);
    }
    if (o.value.kind === 'flag') {
      if (eq > 0) throw new UsageError(`option ${name} takes no value`);
      p.opts.set(name, true);
      continue;
    }
    let v: string;
    if (eq > 0) v = a.slice(eq + 1);
    else {
      const next = rest[i + 1];
      if (next === undefined || (next.startsWith('--') && next.length > 2)) throw new UsageError(`option ${name} needs a value: ${placeholder(o)}`);
      v = next;
      i++;
    }
    if (p.opts.has(name) && !(o.value.kind === 'text' && o.value.repeat)) throw new UsageError(`option ${name} is given twice`);
    p.opts.set(name, v);
    p.lists.set(name, [...(p.lists.get(name) ?? []), v]);
  }
  if (p.opts.has('--help')) return p;
  for (const [name, v] of p.opts) if (v !== true) validateValue(cmd, known.get(name)!, v);
  const [lo, hi] = spec.files;
  if (p.files.length < lo || p.files.length > hi) {
    const what = hi === 0 ? 'no files' : hi === 1 ? 'one model file' : 'at least one model file';
    throw new UsageError(`"poise ${cmd}" takes ${what}${p.files.length ? `, not ${p.files.length}` : ''} (see "poise ${cmd} --help")`);
  }
  return p;
}

function placeholder(o: OptionSpec): string {
  const k = o.value;
  return k.kind === 'flag' ? '' : k.kind === 'choice' ? k.choices.join('|') : k.placeholder;
}

function usageLine(c: CommandSpec): string {
  const opts = c.options.filter((o) => o.name !== '--help').map((o) => `[${o.name}${o.value.kind === 'flag' ? '' : ' ' + placeholder(o)}]`);
  return ['poise', c.name, c.args, ...opts].filter(Boolean).join(' ');
}

/** `poise COMMAND --help`: the usage line, what it does and every option it takes. */
export function commandHelp(c: CommandSpec): string {
  const rows = c.options.map((o) => [`${o.name}${o.value.kind === 'flag' ? '' : ' ' + placeholder(o)}`, o.help + (o.default !== undefined ? ` (default ${o.default})` : '')]);
  const w = maxOf(rows.map((r) => r[0].length));
  const out = [`Usage: ${usageLine(c)}`, '', c.summary[0].toUpperCase() + c.summary.slice(1) + '.', '', 'Options:'];
  for (const [a, b] of rows) out.push(`  ${a.padEnd(w)}  ${b}`);
  if (c.notes?.length) pushAll(out, ['', ...c.notes]);
  return out.join('\n');
}

/** `poise --help`: every command with its summary. */
export function generalHelp(): string {
  const w = maxOf(COMMANDS.map((c) => `${c.name} ${c.args}`.length));
  return [
    'Usage: poise COMMAND [options]',
    '',
    'Commands:',
    ...COMMANDS.map((c) => `  ${`${c.name} ${c.args}`.trimEnd().padEnd(w)}  ${c.summary}`),
    '',
    'Options:',
    '  --help, -h   this text; "poise COMMAND --help" lists the options of a command',
    '  --version    print the version',
  ].join('\n');
}
