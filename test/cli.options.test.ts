/**
 * The command line as users expect it (issue 10, section 1): one option table per command drives
 * parsing, validation and `poise COMMAND --help`; unknown, misspelt and misplaced options are refused
 * with exit code 2 before any output; `--digits` is checked; `check` and `solve` speak JSON with ranges;
 * `--step` takes a unit; `check` says "ok" per clean file and goes on past a missing one; `--version`
 * and `poise lsp` work from the bundle. Conventions (exit code 2 for a wrong command line, 1 for a
 * failed job, one message line, no stack trace) are common practice of command-line tools.
 */
import * as fs from 'fs';
import * as path from 'path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { main } from '../server/src/cli/main';
import { COMMANDS, commandHelp, editDistance, nearest } from '../server/src/cli/options';
import { ensureBuilt, EXAMPLES, ROOT, runCli, scratchDir } from './helpers/cli';
import { dedent } from './helpers/model';

async function run(...argv: string[]): Promise<{ code: number; out: string; err: string }> {
  let out = '';
  let err = '';
  const code = await main(argv, { out: (s) => (out += s.endsWith('\n') ? s : s + '\n'), err: (s) => (err += s.endsWith('\n') ? s : s + '\n') });
  return { code, out, err };
}

const STACK = /\n\s+at .+[:(]\d+:\d+/;
const ex = (f: string) => path.join(EXAMPLES, f);
const tank = ex('buffer_tank.poise');

let dir = '';
beforeAll(() => {
  dir = scratchDir('cliopts');
});
afterAll(() => {
  fs.rmSync(dir, { recursive: true, force: true });
});
const file = (name: string, text: string) => {
  const p = path.join(dir, name);
  fs.writeFileSync(p, dedent(text));
  return p;
};

describe('usage errors: exit 2, one line on stderr, nothing on stdout', () => {
  const cases: [string, string[], RegExp][] = [
    ['misspelt option, nearest suggested', ['solve', tank, '--pont', 'dry_day'], /unknown option --pont for "poise solve"; did you mean --point\?/],
    ['misspelt option with "="', ['linearize', tank, '--point=dry_day', '--fromat=json'], /unknown option --fromat .*did you mean --format\?/],
    ['unknown option, nothing near', ['check', tank, '--frobnicate'], /unknown option --frobnicate for "poise check"/],
    ['option of another command', ['solve', tank, '--point', 'dry_day', '--html', 'x.html'], /option --html does not apply to "poise solve" \(it belongs to "poise report", "poise sweep" or "poise sensitivity"\)/],
    ['option of another command (check)', ['check', tank, '--digits', '4'], /option --digits does not apply to "poise check"/],
    ['format not offered by the command', ['solve', tank, '--format', 'csv'], /--format of "poise solve" takes text or json, not "csv"/],
    ['--digits abc', ['solve', tank, '--point', 'dry_day', '--digits', 'abc'], /--digits takes a whole number from 1 to 17, not "abc"/],
    ['--digits 0', ['linearize', tank, '--point', 'dry_day', '--digits', '0'], /--digits takes a whole number from 1 to 17, not "0"/],
    ['--digits 200', ['solve', tank, '--point', 'dry_day', '--digits', '200'], /from 1 to 17, not "200"/],
    ['--digits 2.5', ['sweep', ex('belt_drive.poise'), '--digits', '2.5'], /from 1 to 17, not "2.5"/],
    ['a flag with a value', ['linearize', tank, '--symbolic=yes'], /option --symbolic takes no value/],
    ['an option given twice', ['solve', tank, '--point', 'a', '--point', 'b'], /option --point is given twice/],
    ['two files for solve', ['solve', tank, tank], /"poise solve" takes one model file, not 2/],
    ['misspelt command', ['linearise', tank], /unknown command "linearise"; did you mean "linearize"\?/],
    ['an option before the command', ['--point', 'x', 'solve'], /"--point" is not a command/],
    ['--log is a word of --vary', ['sweep', ex('belt_drive.poise'), '--log'], /"poise sweep" takes no option --log: write "log" at the end of --vary/],
  ];
  it.each(cases)('%s', async (_, argv, msg) => {
    const r = await run(...argv);
    expect(r.code).toBe(2);
    expect(r.out).toBe('');
    expect(r.err.trimEnd().split('\n')).toHaveLength(1);
    expect(r.err).toMatch(msg);
  });

  it('a wrong --digits stops solve before it prints anything (also as a real process)', () => {
    ensureBuilt();
    for (const d of ['abc', '0', '18', '200', '-1']) {
      const r = runCli(['solve', tank, '--point', 'dry_day', '--digits', d]);
      expect(r.code, d).toBe(2);
      expect(r.stdout, d).toBe('');
      expect(r.stderr, d).not.toMatch(STACK);
      expect(r.stderr, d).toMatch(/--digits takes a whole number from 1 to 17/);
    }
    // the ends of the range are accepted: 1 and 17 significant digits of h = 0.694444… m (see cli.test.ts)
    expect(runCli(['solve', tank, '--point', 'dry_day', '--digits', '1']).stdout).toMatch(/^\s+level\s+0\.7 \[m\]$/m);
    expect(runCli(['solve', tank, '--point', 'dry_day', '--digits', '17']).stdout).toMatch(/^\s+level\s+0\.69444444444444\d* \[m\]$/m);
  });
});

describe('the option tables', () => {
  it('every command has help text for every option, and its help lists them all', async () => {
    for (const c of COMMANDS) {
      for (const o of c.options) {
        expect(o.name, c.name).toMatch(/^--[a-z][A-Za-z-]*$/);
        expect(o.help.length, `${c.name} ${o.name}`).toBeGreaterThan(5);
      }
      const r = await run(c.name, '--help');
      expect(r.code, c.name).toBe(0);
      expect(r.err).toBe('');
      expect(r.out.trimEnd()).toBe(commandHelp(c));
      expect(r.out).toMatch(new RegExp(`^Usage: poise ${c.name}\\b`));
      for (const o of c.options) expect(r.out, `${c.name} ${o.name}`).toContain(`  ${o.name}`);
      // -h means the same, wherever it stands
      expect((await run(c.name, '-h')).out).toBe(r.out);
      expect((await run('help', c.name)).out).toBe(r.out);
    }
  });

  it('the general help lists every command', async () => {
    const r = await run('--help');
    expect(r.code).toBe(0);
    for (const c of COMMANDS) expect(r.out).toMatch(new RegExp(`^  ${c.name}\\b`, 'm'));
    expect(r.out).not.toMatch(/FROM:TO/);
  });

  it('edit distance and the nearest name', () => {
    // Damerau–Levenshtein distances worked by hand: one swap, one deletion, one substitution
    expect(editDistance('--fromat', '--format')).toBe(1);
    expect(editDistance('--pont', '--point')).toBe(1);
    expect(editDistance('kitten', 'sitting')).toBe(3); // the classic textbook pair (common knowledge)
    expect(nearest('--digit', ['--point', '--digits'])).toBe('--digits');
    expect(nearest('--tol', ['--tolerance', '--step'])).toBe('--tolerance');
    expect(nearest('--zzzz', ['--point', '--digits'])).toBeUndefined();
  });
});

describe('check', () => {
  it('a missing file does not stop the others; the run exits 1', async () => {
    const good = file('good.poise', `
      input u
      state x
      x' = -x + u
      point p:
        u = 1
    `);
    const missing = path.join(dir, 'missing.poise');
    const r = await run('check', tank, missing, good);
    expect(r.code).toBe(1);
    expect(r.out).toBe(`${tank}: ok\n${good}: ok\n`);
    expect(r.err.trimEnd().split('\n')).toEqual([`poise: cannot read ${missing}: no such file`]);
  });

  it('--format json: every diagnostic with file, line, column, end, code, severity and message', async () => {
    const bad = file('bad.poise', `
      input u
      state x
      x' = -x + u + zz
      point p:
        u = 1
    `);
    const missing = path.join(dir, 'nope.poise');
    const r = await run('check', '--format', 'json', bad, tank, missing);
    expect(r.code).toBe(1);
    expect(r.err).toBe('');
    const j = JSON.parse(r.out);
    expect(j.schema).toBe('poise-check/1');
    expect(j.ok).toBe(false);
    expect(j.files.map((f: { file: string; ok: boolean }) => [f.file, f.ok])).toEqual([[bad, false], [tank, true], [missing, false]]);
    expect(j.files[2].error).toMatch(/no such file/);
    // "zz" is on line 3, columns 15–16 of the file above (1-based; the end column is just past the name)
    expect(j.files[0].diagnostics).toContainEqual({ file: bad, line: 3, column: 15, end: { line: 3, column: 17 }, code: 'P201', severity: 'error', message: expect.stringMatching(/Unknown name "zz"/) });
    // the same position as the text output (an independent rendering of the same diagnostic)
    const text = await run('check', bad);
    expect(text.out).toContain(`${bad}:3:15: error P201:`);
  });
});

describe('solve --format json', () => {
  it('the values with units and roles', async () => {
    const r = await run('solve', tank, '--point', 'dry_day', '--format', 'json');
    expect(r.code).toBe(0);
    const j = JSON.parse(r.out);
    expect(j.schema).toBe('poise-solve/1');
    expect(j.ok).toBe(true);
    expect(j.point).toBe('dry_day');
    // Torricelli outflow: h = (1.5e-3 / (0.4 · 0.0045))² m = 0.6944… m (hand computation, as in cli.test.ts)
    expect(j.values.level.unit).toBe('m');
    expect(Math.abs(j.values.level.value - (1.5e-3 / (0.4 * 0.0045)) ** 2)).toBeLessThan(1e-12);
    expect(j.values.inflow).toEqual({ value: 1.5, unit: 'L/s', role: 'fixed' });
    // the same number as the text output, at the same digits
    const j6 = JSON.parse((await run('solve', tank, '--point', 'dry_day', '--format', 'json', '--digits', '6')).out);
    const t = await run('solve', tank, '--point', 'dry_day');
    expect(t.out).toMatch(new RegExp(`^\\s+level\\s+${j6.values.level.value} \\[m\\]$`, 'm'));
  });

  it('a point without a solution: its diagnostic with a range, exit 1', async () => {
    const f = file('nosol.poise', `
      input u
      state x
      x' = -x*x - u
      point p:
        u = 1
    `);
    const r = await run('solve', f, '--format', 'json');
    expect(r.code).toBe(1);
    const j = JSON.parse(r.out);
    expect(j.ok).toBe(false);
    expect(j.diagnostics.map((d: { code: string }) => d.code)).toContain('P503');
    const d = j.diagnostics.find((x: { code: string }) => x.code === 'P503');
    expect(d.line).toBe(4);
    expect(d.end.line).toBeGreaterThanOrEqual(4);
  });
});

describe('report --step with a unit', () => {
  it('0.5[L/s] is the same step as 0.5 in the declared unit, as 0.0005[m^3/s] and as 30[L/min]', async () => {
    // the declared unit of inflow is L/s (examples/buffer_tank.poise); 1 L = 1e-3 m³ (SI Brochure), 1 min = 60 s
    for (const s of ['inflow=0.5[L/s]', 'inflow=0.5', 'inflow=0.0005[m^3/s]', 'inflow=30 [L/min]']) {
      const r = await run('report', tank, '--point', 'dry_day', '--step', s, '--format', 'json');
      expect(r.code, s).toBe(0);
      const step = JSON.parse(r.out).steps.find((x: { input: string }) => x.input === 'inflow');
      expect(step.inputUnit).toBe('L/s');
      expect(Math.abs(step.step - 0.5), s).toBeLessThan(1e-12);
    }
  });

  it('a unit that does not convert is refused with exit 2', async () => {
    const r = await run('report', tank, '--point', 'dry_day', '--step', 'inflow=0.5[kg]');
    expect(r.code).toBe(2);
    expect(r.out).toBe('');
    expect(r.err).toMatch(/--step inflow: \[kg\] does not convert to the unit of inflow, \[L\/s\]/);
  });
});

describe('the built command', () => {
  beforeAll(() => ensureBuilt());

  it('--version prints the version of package.json (injected into the bundle)', () => {
    const pkg = JSON.parse(fs.readFileSync(path.join(ROOT, 'package.json'), 'utf8'));
    expect(fs.existsSync(path.join(ROOT, 'dist', 'cli.js'))).toBe(true);
    const r = runCli(['--version']);
    expect(r.code).toBe(0);
    expect(r.stdout.trim()).toBe(pkg.version);
    // the bundle carries it itself: a copy of dist/cli.js in a folder without package.json above it
    const copy = path.join(dir, 'cli-copy.js');
    fs.copyFileSync(path.join(ROOT, 'dist', 'cli.js'), copy);
    const mod = require(copy) as { version(): string };
    expect(mod.version()).toBe(pkg.version);
  });

  it('"poise lsp" without a transport, and "poise lsp --help": a clean message, no trace', () => {
    const none = runCli(['lsp']);
    expect(none.code).toBe(2);
    expect(none.stdout).toBe('');
    expect(none.stderr.trimEnd().split('\n')).toHaveLength(1);
    expect(none.stderr).toMatch(/"poise lsp" needs a transport: run "poise lsp --stdio"/);
    expect(none.stderr).not.toMatch(STACK);
    const help = runCli(['lsp', '--help']);
    expect(help.code).toBe(0);
    expect(help.stderr).toBe('');
    expect(help.stdout).toMatch(/^Usage: poise lsp/);
    expect(help.stdout).toContain('--stdio');
    const wrong = runCli(['lsp', '--stdoi']);
    expect(wrong.code).toBe(2);
    expect(wrong.stderr).toMatch(/did you mean --stdio\?/);
  });
});
