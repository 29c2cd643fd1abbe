/**
 * Issue 5 in the editor, through the real server over stdio: the `poise/sweep` and `poise/sweepCandidates`
 * requests, the Run sweep lens of a declared `sweep` block, `poise/export` in every format, and the hover on a
 * coefficient of a generated linear block (formula, value, unit).
 *
 * Checks against things outside the server:
 * - the belt drive's stability change from the closed form (named beside the check);
 * - exports read back with JSON.parse, an RFC 4180 CSV reader, a Markdown table reader, the LaTeX bmatrix
 *   text and Debian's Python/NumPy (skipped when /usr/bin/python3 lacks numpy), compared with the core's
 *   A, B, C, D (the core's own round trips are in test/exports.test.ts);
 * - the hovered formula evaluated by mathjs (an independent expression evaluator) at the listed values, and
 *   the coefficient derived by hand from the model text.
 */
import { spawnSync } from 'child_process';
import * as fs from 'fs';
import { evaluate } from 'mathjs';
import * as path from 'path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { CodeLens } from 'vscode-languageserver-protocol';
import { analyze } from '../../server/src/core/pipeline/analysis';
import { EXAMPLES } from '../helpers/cli';
import { parseCsv } from '../helpers/csv';
import { startSession, uriOf, type Session } from './session';

let s: Session;
const DIGITS = 10;
beforeAll(async () => {
  s = await startSession({ settings: { digits: DIGITS } });
});
afterAll(async () => {
  await s?.shutdown();
});

const BELT = fs.readFileSync(path.join(EXAMPLES, 'belt_drive.poise'), 'utf8');
const BUFFER = fs.readFileSync(path.join(EXAMPLES, 'buffer_tank.poise'), 'utf8');

// belt drive constants, from the model text
const mass = 2.5, stiff = 4000, damp = 3, press = 150, mus = 0.45, muk = 0.25, vref = 0.6;
// fric = press·(muk + (mus−muk)·e^(−slip/vref)), slip = belt − x', so ∂fric/∂x' = press·(mus−muk)·e^(−belt/vref)/vref at
// a steady state (x' = 0) (derivative of an exponential, common practice). The arm's net damping
// damp − ∂fric/∂x' vanishes, and the pair crosses the imaginary axis, where
// belt = vref·ln(press·(mus−muk)/(damp·vref)), at ω = √(stiff/mass) (undamped mass–spring, common practice).
const CROSSING = vref * Math.log((press * (mus - muk)) / (damp * vref));
const OMEGA = Math.sqrt(stiff / mass);

interface Page {
  html: string;
  title: string;
}

/** The stability changes the sweep page lists: "belt = 1.68805 [m/s]: a complex pair crosses …". */
function crossings(html: string): { at: number; text: string }[] {
  return [...html.matchAll(/<li>belt = ([-+\d.e]+) \[m\/s\]: ([^<]*)<\/li>/g)].map((m) => ({ at: Number(m[1]), text: m[2] }));
}

async function rpcError(p: Promise<unknown>): Promise<{ code: number; message: string }> {
  try {
    await p;
  } catch (e) {
    return e as { code: number; message: string };
  }
  throw new Error('expected an error answer');
}

describe('poise/sweep', () => {
  it('returns the sweep page of belt_drive with the stability change located at the closed-form belt speed', async () => {
    const uri = uriOf('sweep-belt.poise');
    await s.open(uri, BELT);
    const page = await s.request<Page>('poise/sweep', { uri, point: 'slow', vary: 'belt', from: 0.05, to: 3, steps: 60, log: false });
    expect(page.title).toBe('Sweep: belt (slow)');
    expect(page.html).toMatch(/^<!DOCTYPE html>/);
    expect(page.html).not.toMatch(/nonce=/); // the VS Code client stamps its own nonce
    const c = crossings(page.html);
    expect(c).toHaveLength(1);
    // closed form above; the page prints 6 significant digits
    expect(Math.abs(c[0].at - CROSSING)).toBeLessThan(1e-5 * CROSSING);
    expect(c[0].text).toContain('complex pair crosses the imaginary axis');
    expect(c[0].text).toContain('unstable → stable');
    const w = Number(/at ±([\d.]+) rad\/s/.exec(c[0].text)![1]);
    expect(Math.abs(w - OMEGA)).toBeLessThan(1e-4 * OMEGA);
    // the charts mark it: a reference line labelled at the crossing, and plotted series
    expect(page.html).toContain('pair crosses');
    expect((page.html.match(/<svg\b/g) ?? []).length).toBeGreaterThan(1);
    expect(page.html).toMatch(/<path class="series[^"]*" d="M[^"]+L/);
  });

  it('reruns a declared sweep as the model now declares it', async () => {
    const uri = uriOf('sweep-declared.poise');
    await s.open(uri, BELT);
    const page = await s.request<Page>('poise/sweep', { uri, point: 'slow', sweep: 'speed_up' });
    expect(page.title).toBe('Sweep speed_up: belt (slow)');
    expect(Math.abs(crossings(page.html)[0].at - CROSSING)).toBeLessThan(1e-5 * CROSSING);
    // the range written in the block: 61 values from 0.05 to 3
    expect(page.html).toContain('61 of 61 values computed');
    // narrow the block's range below the crossing: the page follows the edit, and no longer finds a change
    await s.change(uri, BELT.replace('to 3 [m/s] steps 60', 'to 1.5 [m/s] steps 20'));
    await s.diagnostics(uri);
    const narrow = await s.request<Page>('poise/sweep', { uri, point: 'slow', sweep: 'speed_up' });
    expect(narrow.html).toContain('21 of 21 values computed');
    expect(crossings(narrow.html)).toHaveLength(0);
  });

  it('answers errors with a readable message and keeps running', async () => {
    const uri = uriOf('sweep-errors.poise');
    await s.open(uri, BELT);
    // x is solved by the point ("~"): it cannot be varied there
    const e1 = await rpcError(s.request('poise/sweep', { uri, point: 'slow', vary: 'x', from: 1, to: 2, steps: 4 }));
    expect(e1.message).toMatch(/"x" is a state that point "slow" solves for/);
    const e2 = await rpcError(s.request('poise/sweep', { uri, point: 'nowhere', vary: 'belt', from: 1, to: 2, steps: 4 }));
    expect(e2.message).toContain('no point named "nowhere"');
    const e3 = await rpcError(s.request('poise/sweep', { uri: uriOf('not-open.poise'), point: 'slow', vary: 'belt', from: 1, to: 2, steps: 4 }));
    expect(e3.message).toContain('not open');
    const e4 = await rpcError(s.request('poise/sweep', { uri, point: 'slow', vary: 'belt', from: 1, to: 1, steps: 4 }));
    expect(e4.message).toMatch(/range/);
    const e5 = await rpcError(s.request('poise/sweep', null));
    expect(e5.message).toContain('needs');
    expect(s.exited).toBeUndefined();
    expect((await s.request<Page>('poise/sweep', { uri, point: 'fast', vary: 'belt', from: 2, to: 3, steps: 4 })).html).toContain('No stability change'); // above the crossing
  });
});

describe('poise/sweepCandidates', () => {
  it('offers the constants and the values the point fixes, with their values and units', async () => {
    const uri = uriOf('sweep-candidates.poise');
    await s.open(uri, BELT);
    const list = await s.request<{ name: string; kind: string; unit: string; value: number; from: number; to: number }[]>('poise/sweepCandidates', { uri, point: 'slow' });
    const byName = new Map(list.map((c) => [c.name, c]));
    // from the model text: point slow fixes belt = 0.3 [m/s]; x and the vars are solved, not offered
    expect(byName.get('belt')).toMatchObject({ kind: 'input', unit: 'm/s', value: 0.3 });
    expect(byName.has('x')).toBe(false);
    expect(byName.has('slip')).toBe(false);
    expect(byName.get('press')).toMatchObject({ kind: 'const', unit: 'N', value: 150 });
    expect(byName.get('mus')).toMatchObject({ kind: 'const', unit: '', value: 0.45 });
    for (const c of list) expect(c.from < c.value && c.value < c.to).toBe(true);
  });
});

describe('Run sweep lens', () => {
  it('sits above the declared sweep header and carries the declared range for poise.sweep', async () => {
    const uri = uriOf('sweep-lens.poise');
    await s.open(uri, BELT);
    const lenses = await s.request<CodeLens[]>('textDocument/codeLens', { textDocument: { uri } });
    const run = lenses.filter((l) => l.command?.title === 'Run sweep');
    expect(run).toHaveLength(1);
    expect(run[0].range.start).toEqual(s.pos(uri, 'sweep speed_up'));
    expect(run[0].command!.command).toBe('poise.sweep');
    // the block reads: vary belt = 0.05 [m/s] to 3 [m/s] steps 60, from point slow
    expect(run[0].command!.arguments).toEqual([uri, 'slow', { sweep: 'speed_up', vary: 'belt', from: 0.05, to: 3, steps: 60, log: false }]);
    // what the client sends when the lens runs: {uri, point, ...spec}
    const [, point, spec] = run[0].command!.arguments as [string, string, Record<string, unknown>];
    const page = await s.request<Page>('poise/sweep', { uri, point, ...spec });
    expect(Math.abs(crossings(page.html)[0].at - CROSSING)).toBeLessThan(1e-5 * CROSSING);
    // a block that cannot run says so instead
    await s.change(uri, BELT.replace('vary belt', 'vary x'));
    await s.diagnostics(uri);
    const bad = (await s.request<CodeLens[]>('textDocument/codeLens', { textDocument: { uri } })).filter((l) => l.range.start.line === s.pos(uri, 'sweep speed_up').line);
    expect(bad).toHaveLength(1);
    expect(bad[0].command!.title).toMatch(/^✗ Cannot run sweep/);
    expect(bad[0].command!.command).toBe('');
  });

  it('is left out for clients without the VS Code commands', async () => {
    const t = await startSession({ initializationOptions: { clientCommands: false } });
    try {
      const uri = uriOf('sweep-lens-plain.poise');
      await t.open(uri, BELT);
      const lenses = await t.request<CodeLens[]>('textDocument/codeLens', { textDocument: { uri } });
      expect(lenses.map((l) => l.command!.command).sort()).toEqual(['poise.server.linearizePoint', 'poise.server.linearizePoint', 'poise.server.solvePoint', 'poise.server.solvePoint']);
    } finally {
      await t.shutdown();
    }
  });
});

// ---------------------------------------------------------------- exports

type M = 'A' | 'B' | 'C' | 'D';
const MATS: M[] = ['A', 'B', 'C', 'D'];

function coreMatrices(text: string, point: string) {
  const lin = analyze(text).linear(point)!;
  const dims: Record<M, [number, number]> = { A: [lin.n, lin.n], B: [lin.n, lin.m], C: [lin.p, lin.n], D: [lin.p, lin.m] };
  const rows = (m: M) => Array.from({ length: dims[m][0] }, (_, i) => Array.from(lin[m].subarray(i * dims[m][1], (i + 1) * dims[m][1])));
  return { lin, dims, rows };
}

/** The GFM table right after the paragraph `**M** (r×c)`: its rows without the header cell. */
function markdownMatrix(md: string, m: M): number[][] | undefined {
  const lines = md.split('\n');
  const at = lines.findIndex((l) => l.startsWith(`**${m}**`));
  if (at < 0) return undefined;
  let i = at + 1;
  while (i < lines.length && !lines[i].trim()) i++;
  if (!lines[i]?.startsWith('|')) return undefined;
  const out: number[][] = [];
  for (let k = i + 2; k < lines.length && lines[k].startsWith('|'); k++) {
    out.push(lines[k].trim().replace(/^\||\|$/g, '').split('|').slice(1).map((c) => Number(c.trim())));
  }
  return out;
}

/** `M = \begin{bmatrix} a & b \\ c & d \end{bmatrix}` (numbers possibly as `1.5\times 10^{-7}`). */
function latexMatrix(tex: string, m: M): number[][] | undefined {
  const r = new RegExp(`(^|\\n)${m} = \\\\begin\\{bmatrix\\}([\\s\\S]*?)\\\\end\\{bmatrix\\}`).exec(tex);
  if (!r) return undefined;
  const num = (t: string) => {
    const x = /^(-?[\d.]+)\\times 10\^\{(-?\d+)\}$/.exec(t.trim());
    return x ? Number(`${x[1]}e${x[2]}`) : Number(t.trim());
  };
  return r[2].trim().split('\\\\').map((row) => row.split('&').map(num));
}

/** The `M = np.array([...], dtype=float)` literal of the NumPy snippet read as JSON (Python list syntax). */
function numpyLiteral(py: string, m: M): number[][] | undefined {
  const r = new RegExp(`^${m} = np\\.array\\(\\[\\n([\\s\\S]*?)\\n\\], dtype=float\\)`, 'm').exec(py);
  if (!r) return undefined;
  const body = r[1].split('\n').map((l) => l.replace(/#.*$/, '').trim()).join('').replace(/,$/, '');
  return JSON.parse(`[${body}]`) as number[][];
}

const PY = '/usr/bin/python3';
const haveNumpy = fs.existsSync(PY) && spawnSync(PY, ['-c', 'import numpy'], { encoding: 'utf8' }).status === 0;

describe('poise/export', () => {
  const cases = [
    { file: 'belt_drive.poise', text: BELT, point: 'slow' },
    { file: 'buffer_tank.poise', text: BUFFER, point: 'cloudburst' },
  ];
  for (const c of cases) {
    it(`${c.file} at ${c.point}: every format reads back to the core's A, B, C, D`, async () => {
      const uri = uriOf(`export-${c.file}`);
      await s.open(uri, c.text);
      const { dims, rows } = coreMatrices(c.text, c.point);
      const get = async (format: string) => (await s.request<{ text: string }>('poise/export', { uri, point: c.point, format })).text;

      const json = JSON.parse(await get('json')) as Record<string, unknown>;
      expect(json.point).toBe(c.point);
      for (const m of MATS) expect(json[m]).toEqual(rows(m));

      const csv = parseCsv(await get('csv'));
      expect(csv[0]).toEqual(['kind', 'row', 'column', 'value', 'unit']);
      const lin = coreMatrices(c.text, c.point).lin;
      for (const m of MATS) {
        const rowNames = m === 'A' || m === 'B' ? lin.states : lin.outputs;
        const colNames = m === 'A' || m === 'C' ? lin.states : lin.inputs;
        const got = rows(m).map((r) => r.map(() => NaN));
        for (const x of csv.filter((r) => r[0] === m)) got[rowNames.indexOf(x[1])][colNames.indexOf(x[2])] = Number(x[3]);
        expect(got).toEqual(rows(m));
      }

      const md = await get('markdown');
      for (const m of MATS) {
        if (dims[m][0] && dims[m][1]) expect(markdownMatrix(md, m)).toEqual(rows(m));
      }

      const tex = await get('latex');
      expect((tex.match(/\\begin\{/g) ?? []).length).toBe((tex.match(/\\end\{/g) ?? []).length);
      for (const m of MATS) {
        if (dims[m][0] && dims[m][1]) expect(latexMatrix(tex, m)).toEqual(rows(m));
      }

      const py = await get('numpy');
      for (const m of MATS) {
        if (dims[m][0] && dims[m][1]) expect(numpyLiteral(py, m)).toEqual(rows(m));
      }
      if (haveNumpy) {
        const tail = '\nimport json\nprint(json.dumps({"A": A.tolist(), "B": B.tolist(), "C": C.tolist(), "D": D.tolist(), "shapes": [list(M.shape) for M in (A, B, C, D)]}))\n';
        const r = spawnSync(PY, ['-'], { input: py + tail, encoding: 'utf8' });
        expect(r.stderr).toBe('');
        const j = JSON.parse(r.stdout) as Record<string, unknown> & { shapes: number[][] };
        for (const m of MATS) {
          expect(j.shapes[MATS.indexOf(m)]).toEqual(dims[m]);
          if (dims[m][0]) expect(j[m]).toEqual(rows(m));
        }
      } else {
        console.warn('poise/export NumPy check: /usr/bin/python3 cannot import numpy (apt-get install -y python3-numpy); read the literal only');
      }
    });
  }

  it('answers errors with a readable message', async () => {
    const uri = uriOf('export-errors.poise');
    await s.open(uri, BUFFER);
    expect((await rpcError(s.request('poise/export', { uri, point: 'dry_day', format: 'yaml' }))).message).toMatch(/Unknown export format "yaml".*latex/);
    expect((await rpcError(s.request('poise/export', { uri, point: 'nowhere', format: 'json' }))).message).toContain('no point named "nowhere"');
    // a point that cannot be solved: sqrt of a negative level (inflow < 0 cannot drain through the valve)
    await s.change(uri, BUFFER.replace('inflow = 1.5 [L/s]', 'inflow = -1.5 [L/s]'));
    const e = await rpcError(s.request('poise/export', { uri, point: 'dry_day', format: 'csv' }));
    expect(e.message).toMatch(/point "dry_day" does not solve/);
    expect(s.exited).toBeUndefined();
  });
});

// ---------------------------------------------------------------- coefficient hover

/** The hover of a coefficient: `formula` = value [unit] and the symbol table. */
function readCoefficient(md: string) {
  const line = md.split('\n').find((l) => /^`[^`]+` = /.test(l));
  expect(line, `formula line in\n${md}`).toBeDefined();
  const m = /^`([^`]+)` = (\S+)(?: \[(.+)\])?$/.exec(line!)!;
  const symbols: Record<string, number> = {};
  for (const r of md.matchAll(/^\| `([^`]+)` \| (\S+)(?: \[[^\]]*\])? \|/gm)) symbols[r[1]] = Number(r[2]);
  // the unit as Markdown shows it: backslash escapes removed (CommonMark §2.4)
  return { formula: m[1], value: Number(m[2]), unit: (m[3] ?? '').replace(/\\(.)/g, '$1'), symbols, head: md.split('\n')[0] };
}

const printed = (v: number) => Number(v.toPrecision(DIGITS));

describe('hover on a coefficient of a generated linear block', () => {
  it('shows the formula, its value (the A and B entries) and unit, on the number and on the Δ name after it', async () => {
    const uri = uriOf('hover-coef-belt.poise');
    await s.open(uri, BELT);
    await s.request('workspace/executeCommand', { command: 'poise.server.linearizePoint', arguments: [uri, 'slow'] });
    const text = s.text(uri);
    const line = text.split('\n').find((l) => l.trim().startsWith("Δx'' ="))!;
    expect(line).toBeDefined();
    const { lin } = coreMatrices(BELT, 'slow');
    const n = lin.n;
    const ix = lin.states.indexOf("x'");
    const hoverAt = async (needle: string, delta: number) => {
      const h = await s.hover(uri, s.pos(uri, needle, delta));
      expect(h, `hover at ${needle}+${delta}`).not.toBeNull();
      return h!;
    };
    // the term "… + 10.93…*Δx' …": on its number, then on the Δ name right after it
    const term = /[-+]\s*([\d.e+-]+)\*Δx'(?!')/.exec(line)!;
    const numberText = term[1];
    const onNumber = await hoverAt(`${numberText}*Δx'`, 1);
    const c = readCoefficient(onNumber.contents.value);
    expect(c.head).toContain(`\`A[${ix + 1},${ix + 1}]\``);
    expect(c.value).toBe(printed(lin.A[ix * n + ix]));
    expect(c.unit).toBe('1/s');
    // by hand from the model text: (∂fric/∂x' − damp)/mass with ∂fric/∂x' = press·(mus−muk)·e^(−belt/vref)/vref, belt = 0.3
    // (derivative of an exponential, common practice); x is in mm but Δx'' and Δx' share the unit, so no factor
    const byHand = ((press * (mus - muk) * Math.exp(-0.3 / vref)) / vref - damp) / mass;
    expect(Math.abs(c.value - byHand)).toBeLessThan(1e-8 * Math.abs(byHand));
    // the formula evaluated by mathjs at the listed symbol values equals the value
    const viaMathjs = evaluate(c.formula, c.symbols) as number;
    expect(Math.abs(viaMathjs - lin.A[ix * n + ix])).toBeLessThan(1e-8 * Math.abs(lin.A[ix * n + ix]));
    expect(c.symbols.slip0).toBe(0.3); // slip = belt − x' = belt at a steady state
    expect(onNumber.range!.start).toEqual(s.pos(uri, `${numberText}*Δx'`));

    const onName = await hoverAt(`${numberText}*Δx'`, numberText.length + 3);
    const c2 = readCoefficient(onName.contents.value);
    expect(c2).toEqual(c);
    expect(onName.contents.value).toContain("`Δx'` — time derivative of `Δx`"); // plus what the Δ name is

    // the B entry: "… - 12130…*Δbelt"; unit (mm/s)/(s·(m/s)) since x is in mm and belt in m/s, written
    // simplified (the s of both speeds cancel): mm/(s*m)
    const b = /[-+]\s*([\d.e+-]+)\*Δbelt/.exec(line)!;
    const cb = readCoefficient((await hoverAt(`${b[1]}*Δbelt`, 0)).contents.value);
    expect(cb.head).toContain(`\`B[${ix + 1},1]\``);
    expect(cb.value).toBe(printed(lin.B[ix]));
    expect(Math.abs((evaluate(cb.formula, cb.symbols) as number) - lin.B[ix])).toBeLessThan(1e-8 * Math.abs(lin.B[ix]));
    // by hand: ∂fric/∂belt / mass = −press·(mus−muk)·e^(−belt/vref)/(vref·mass) per m/s, ×1000 for mm
    const bHand = (-1000 * press * (mus - muk) * Math.exp(-0.3 / vref)) / (vref * mass);
    expect(Math.abs(cb.value - bHand)).toBeLessThan(1e-8 * Math.abs(bHand));
    expect(cb.unit).toBe('mm/(s*m)');
  });

  it('works on output rows and coefficients written without a number', async () => {
    const uri = uriOf('hover-coef-buffer.poise');
    await s.open(uri, BUFFER);
    await s.request('workspace/executeCommand', { command: 'poise.server.linearizePoint', arguments: [uri, 'dry_day'] });
    const { lin } = coreMatrices(BUFFER, 'dry_day');
    // Δlevel_cm = 100*Δlevel: 1 m = 100 cm (SI prefixes, common practice)
    const c = readCoefficient((await s.hover(uri, s.pos(uri, '100*Δlevel', 1)))!.contents.value);
    expect(c.head).toContain('`C[1,1]`');
    expect(c.value).toBe(100);
    expect(c.value).toBe(lin.C[0]);
    expect(evaluate(c.formula, c.symbols)).toBe(100);
    expect(c.unit).toBe('cm/m');
    // the state row: Δlevel' = a*Δlevel + b*Δinflow + c*Δopening; check the Δopening coefficient with mathjs
    const row = s.text(uri).split('\n').find((l) => l.trim().startsWith("Δlevel' ="))!;
    const t = /[-+]\s*([\d.e+-]+)\*Δopening/.exec(row)!;
    const co = readCoefficient((await s.hover(uri, s.pos(uri, `${t[1]}*Δopening`, 0)))!.contents.value);
    const j = lin.inputs.indexOf('opening');
    expect(co.value).toBe(printed(lin.B[j]));
    expect(Math.abs((evaluate(co.formula, co.symbols) as number) - lin.B[j])).toBeLessThan(1e-8 * Math.abs(lin.B[j]));
    // comments and the `at` line are not coefficients
    expect((await s.hover(uri, s.pos(uri, 'regenerate, do not edit', 2)))).toBeNull();
  });

  it('says so when the block is stale', async () => {
    const uri = uriOf('hover-coef-stale.poise');
    await s.open(uri, BUFFER);
    await s.request('workspace/executeCommand', { command: 'poise.server.linearizePoint', arguments: [uri, 'dry_day'] });
    await s.change(uri, s.text(uri).replace('const area  = 3.2 [m^2]', 'const area  = 4 [m^2]'));
    await s.diagnostics(uri);
    const row = s.text(uri).split('\n').find((l) => l.trim().startsWith("Δlevel' ="))!;
    const t = /[-+]\s*([\d.e+-]+)\*Δinflow/.exec(row)!;
    const md = (await s.hover(uri, s.pos(uri, `${t[1]}*Δinflow`, 0)))!.contents.value;
    expect(md).toContain('This block is stale');
    // the current value: 1/area with the new area 4 m², inflow in L/s → ×0.001 (by hand)
    expect(readCoefficient(md).value).toBe(printed(0.001 / 4));
  });
});
