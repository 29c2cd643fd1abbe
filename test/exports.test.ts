/**
 * Exports of the linear model (server/src/core/present/exports.ts): each format read back by something outside
 * the exporter gives the same numbers —
 * - JSON with JSON.parse (ECMA-404), checked against the field list documented in docs/exports.md;
 * - CSV with an RFC 4180 parser written here;
 * - Markdown tables with a GitHub-flavoured-Markdown table parser written here;
 * - LaTeX checked for balanced \begin/\end environments and braces (LaTeX syntax, common practice) and the
 *   bmatrix entries parsed back;
 * - the NumPy snippet run by Debian's Python with python3-numpy (/usr/bin/python3; skipped with a message when
 *   numpy is missing there), the arrays printed back as JSON.
 * Numbers are written exactly by default, so "the same numbers" means bit-for-bit equal doubles.
 */
import { spawnSync } from 'child_process';
import * as fs from 'fs';
import * as path from 'path';
import { describe, expect, it } from 'vitest';
import { analyze, analyzeDocuments } from '../server/src/core/pipeline/analysis';
import { cliSources } from '../server/src/cli/sourceHost';
import { main, type Io } from '../server/src/cli/main';
import { EXPORT_FORMATS, exportLinear, LINEAR_SCHEMA } from '../server/src/core/present/exports';
import type { LinearModel } from '../server/src/core/solve/linearizer';
import { EXAMPLES, REFERENCE, ROOT } from './helpers/cli';
import { parseCsv } from './helpers/csv';
import { exampleModels } from './helpers/examples';

const files = [
  ...exampleModels().map((m) => m.file),
  ...fs.readdirSync(path.join(REFERENCE, 'models')).filter((f) => f.endsWith('.poise')).map((f) => path.join(REFERENCE, 'models', f)),
];

const cases = files.flatMap((file) => {
  // through the command line's disk host, so files beside a model (a table's CSV) are read
  const a = analyzeDocuments(cliSources(file, fs.readFileSync(file, 'utf8')), file)!;
  return a.pointNames.map((point) => ({ name: `${path.basename(file)} at ${point}`, a, point, lin: a.linear(point)! }));
});

type M = 'A' | 'B' | 'C' | 'D';
const MATS: M[] = ['A', 'B', 'C', 'D'];
const dims = (lin: LinearModel, m: M): [number, number] => ({ A: [lin.n, lin.n], B: [lin.n, lin.m], C: [lin.p, lin.n], D: [lin.p, lin.m] })[m] as [number, number];
const rowsOf = (lin: LinearModel, m: M): number[][] => {
  const [r, c] = dims(lin, m);
  return Array.from({ length: r }, (_, i) => Array.from(lin[m].subarray(i * c, i * c + c)));
};

// ---------------------------------------------------------------- parsers written for the test

/** GFM tables: consecutive lines starting with "|", the second a delimiter row; cells split on unescaped "|". */
function parseMarkdownTables(text: string): { before: string; header: string[]; rows: string[][] }[] {
  const lines = text.split('\n');
  const tables: { before: string; header: string[]; rows: string[][] }[] = [];
  const cells = (l: string) => l.trim().replace(/^\|/, '').replace(/\|$/, '').split(/(?<!\\)\|/).map((c) => c.trim().replace(/\\\|/g, '|'));
  for (let i = 0; i + 1 < lines.length; i++) {
    if (!lines[i].startsWith('|') || !/^\|[-:| ]+\|$/.test(lines[i + 1].trim())) continue;
    let k = i - 1;
    while (k >= 0 && !lines[k].trim()) k--;
    const t = { before: k >= 0 ? lines[k] : '', header: cells(lines[i]), rows: [] as string[][] };
    let j = i + 2;
    for (; j < lines.length && lines[j].startsWith('|'); j++) t.rows.push(cells(lines[j]));
    tables.push(t);
    i = j;
  }
  return tables;
}

/** Strips LaTeX comments (an unescaped % to the end of the line). */
const texStrip = (s: string) => s.split('\n').map((l) => l.replace(/(^|[^\\])%.*$/, '$1')).join('\n');

function texBalanced(tex: string): string | undefined {
  const body = texStrip(tex).replace(/\\[{}]/g, '');
  let depth = 0;
  for (const ch of body) {
    if (ch === '{') depth++;
    else if (ch === '}' && --depth < 0) return 'a "}" closes nothing';
  }
  if (depth) return `${depth} unclosed "{"`;
  const stack: string[] = [];
  for (const m of body.matchAll(/\\(begin|end)\{([^}]*)\}/g)) {
    if (m[1] === 'begin') stack.push(m[2]);
    else if (stack.pop() !== m[2]) return `\\end{${m[2]}} does not match`;
  }
  return stack.length ? `\\begin{${stack[0]}} never ends` : undefined;
}

/** A LaTeX number: 1.5, -2, 1.5\times 10^{-7}. */
function texNumber(s: string): number {
  const t = s.trim();
  const m = /^(-?[\d.]+)\\times 10\^\{(-?\d+)\}$/.exec(t);
  if (m) return Number(`${m[1]}e${m[2]}`);
  if (!/^-?[\d.]+$/.test(t)) throw new Error(`not a number: ${t}`);
  return Number(t);
}

function texMatrix(tex: string, name: M): number[][] | undefined {
  const m = new RegExp(`(^|\\n)${name} = \\\\begin\\{bmatrix\\}([\\s\\S]*?)\\\\end\\{bmatrix\\}`).exec(texStrip(tex));
  if (!m) return undefined;
  return m[2].trim().split('\\\\').map((row) => row.split('&').map(texNumber));
}

// ---------------------------------------------------------------- the round trips

describe('JSON', () => {
  const doc = fs.readFileSync(path.join(ROOT, 'docs', 'exports.md'), 'utf8');
  // field names documented in the table of the "## JSON" section of docs/exports.md: rows "| `name` | …"
  const section = doc.slice(doc.indexOf('\n## JSON'), doc.indexOf('\n## ', doc.indexOf('\n## JSON') + 3));
  const documented = [...section.matchAll(/^\| `([A-Za-z]+)` \|/gm)].map((m) => m[1]);
  for (const c of cases) {
    it(c.name, () => {
      const j = JSON.parse(exportLinear(c.a, c.point, 'json')) as Record<string, unknown>;
      expect(j.schema).toBe(LINEAR_SCHEMA);
      // a row that starts "(only for …)" documents a field that only some models have
      const optional = new Set([...section.matchAll(/^\| `([A-Za-z]+)` \| \(only /gm)].map((m) => m[1]));
      expect(Object.keys(j).sort()).toEqual([...new Set(documented)].filter((k) => !optional.has(k) || k in j).sort());
      for (const m of MATS) expect(j[m]).toEqual(rowsOf(c.lin, m));
      expect(j.states).toEqual(c.lin.states);
      const values = j.values as Record<string, { value: number; unit: string }>;
      for (const v of c.a.values(c.a.point(c.point)!)) if (v.kind !== 'const') expect(values[v.name].value).toBe(v.value);
    });
  }
});

describe('CSV', () => {
  for (const c of cases) {
    it(c.name, () => {
      const rows = parseCsv(exportLinear(c.a, c.point, 'csv'));
      expect(rows[0]).toEqual(['kind', 'row', 'column', 'value', 'unit']);
      expect(rows.find((r) => r[0] === 'point')?.[1]).toBe(c.point);
      expect(rows.find((r) => r[0] === 'time')?.[4]).toBe(c.lin.timeUnit);
      for (const m of MATS) {
        const [r, k] = dims(c.lin, m);
        const got = rows.filter((x) => x[0] === m);
        expect(got.length).toBe(r * k);
        const rowNames = m === 'A' || m === 'B' ? c.lin.states : c.lin.outputs;
        const colNames = m === 'A' || m === 'C' ? c.lin.states : c.lin.inputs;
        for (const g of got) expect(Number(g[3])).toBe(c.lin[m][rowNames.indexOf(g[1]) * k + colNames.indexOf(g[2])]);
      }
      for (const v of c.a.values(c.a.point(c.point)!)) {
        if (v.kind === 'const') continue;
        const g = rows.find((x) => x[0] === 'value' && x[1] === v.name)!;
        expect(Number(g[3])).toBe(v.value);
        expect(g[4]).toBe(v.unit);
      }
    });
  }
});

describe('Markdown', () => {
  for (const c of cases) {
    it(c.name, () => {
      const md = exportLinear(c.a, c.point, 'markdown');
      const tables = parseMarkdownTables(md);
      const values = tables.find((t) => t.header[0] === 'variable')!;
      for (const v of c.a.values(c.a.point(c.point)!)) if (v.kind !== 'const') expect(Number(values.rows.find((r) => r[0] === v.name)![1])).toBe(v.value);
      for (const m of MATS) {
        const [r, k] = dims(c.lin, m);
        const t = tables.find((x) => x.before.startsWith(`**${m}**`));
        if (!r || !k) {
          expect(t).toBeUndefined();
          continue;
        }
        expect(t!.rows.length).toBe(r);
        expect(t!.rows.map((row) => row.slice(1).map(Number))).toEqual(rowsOf(c.lin, m));
        expect(t!.header.length).toBe(k + 1);
      }
    });
  }
});

describe('LaTeX', () => {
  for (const c of cases) {
    it(c.name, () => {
      const tex = exportLinear(c.a, c.point, 'latex');
      expect(texBalanced(tex)).toBeUndefined();
      expect(tex).toMatch(/\\begin\{align\*\}/);
      for (const m of MATS) {
        const [r, k] = dims(c.lin, m);
        const got = texMatrix(tex, m);
        if (!r || !k) expect(got).toBeUndefined();
        else expect(got).toEqual(rowsOf(c.lin, m));
      }
    });
  }
  it('the checker itself rejects unbalanced text', () => {
    expect(texBalanced('\\begin{align*} x \\end{bmatrix}')).toBeDefined();
    expect(texBalanced('{a}}')).toBeDefined();
    expect(texBalanced('% {\n\\{ ok \\}')).toBeUndefined();
  });
});

describe('NumPy', () => {
  const py = '/usr/bin/python3';
  const probe = fs.existsSync(py) ? spawnSync(py, ['-c', 'import numpy'], { encoding: 'utf8' }) : undefined;
  const haveNumpy = probe !== undefined && probe.status === 0;
  if (!haveNumpy) {
    it.skip('needs Debian python3-numpy (apt-get install -y python3-numpy): /usr/bin/python3 cannot import numpy', () => {});
    return;
  }
  for (const c of cases) {
    it(c.name, () => {
      const snippet = exportLinear(c.a, c.point, 'numpy');
      const tail = '\nimport json\nprint(json.dumps({"A": A.tolist(), "B": B.tolist(), "C": C.tolist(), "D": D.tolist(), "states": states, "inputs": inputs, "outputs": outputs, "point": point, "shapes": [list(A.shape), list(B.shape), list(C.shape), list(D.shape)]}))\n';
      const r = spawnSync(py, ['-'], { input: snippet + tail, encoding: 'utf8' });
      expect(r.stderr).toBe('');
      expect(r.status).toBe(0);
      const j = JSON.parse(r.stdout) as Record<string, unknown> & { shapes: number[][]; point: Record<string, number> };
      for (const m of MATS) {
        const [rr, k] = dims(c.lin, m);
        if (rr) expect(j[m]).toEqual(rowsOf(c.lin, m));
        expect(j.shapes[MATS.indexOf(m)]).toEqual([rr, k]);
      }
      expect(j.states).toEqual(c.lin.states);
      expect(j.inputs).toEqual(c.lin.inputs);
      for (const v of c.a.values(c.a.point(c.point)!)) if (v.kind !== 'const') expect(j.point[v.name]).toBe(v.value);
    });
  }
});

describe('poise linearize --format', () => {
  it('prints every export format as exportLinear does', async () => {
    const file = path.join(EXAMPLES, 'gantry_crane.poise');
    const a = analyze(fs.readFileSync(file, 'utf8'));
    for (const f of EXPORT_FORMATS) {
      const io: Io & { stdout: string } = { stdout: '', out(s) { io.stdout += s.endsWith('\n') ? s : s + '\n'; }, err() {} };
      expect(await main(['linearize', file, '--format', f], io)).toBe(0);
      expect(io.stdout).toBe(exportLinear(a, 'parked_in_wind', f));
    }
    const io: Io & { stderr: string } = { stderr: '', out() {}, err(s) { io.stderr += s; } };
    expect(await main(['linearize', file, '--format', 'yaml'], io)).toBe(2);
    expect(io.stderr).toMatch(/latex/);
  });
});

// ---------------------------------------------------------------- the sparse form (--sparse)

/** Dense rows from the compressed-row layout of docs/exports.md ("Sparse form"). */
function fromRowStart(m: { rows: number; columns: number; rowStart: number[]; column: number[]; value: number[] }): number[][] {
  const out = Array.from({ length: m.rows }, () => new Array<number>(m.columns).fill(0));
  for (let i = 0; i < m.rows; i++) for (let t = m.rowStart[i]; t < m.rowStart[i + 1]; t++) out[i][m.column[t]] = m.value[t];
  return out;
}
const nonZeros = (lin: LinearModel, m: M) => rowsOf(lin, m).flat().filter((x) => x !== 0).length;

describe('sparse form', () => {
  const py = '/usr/bin/python3';
  const probe = fs.existsSync(py) ? spawnSync(py, ['-c', 'import numpy, scipy.sparse'], { encoding: 'utf8' }) : undefined;
  const haveScipy = probe !== undefined && probe.status === 0;
  for (const c of cases) {
    it(`${c.name}: JSON (JSON.parse), CSV (RFC 4180 reader)${haveScipy ? ', SciPy' : ''}`, () => {
      const j = JSON.parse(exportLinear(c.a, c.point, 'json', { sparse: true })) as Record<string, unknown>;
      expect(j.schema).toBe(LINEAR_SCHEMA);
      for (const m of MATS) {
        const sm = j[m] as Parameters<typeof fromRowStart>[0];
        expect([sm.rows, sm.columns]).toEqual(dims(c.lin, m));
        expect(sm.value.length).toBe(nonZeros(c.lin, m));
        expect(fromRowStart(sm)).toEqual(rowsOf(c.lin, m));
      }
      const rows = parseCsv(exportLinear(c.a, c.point, 'csv', { sparse: true }));
      for (const m of MATS) {
        const got = rows.filter((x) => x[0] === m);
        expect(got.length).toBe(nonZeros(c.lin, m));
        const [r, k] = dims(c.lin, m);
        const dense = Array.from({ length: r }, () => new Array<number>(k).fill(0));
        const rowNames = m === 'A' || m === 'B' ? c.lin.states : c.lin.outputs;
        const colNames = m === 'A' || m === 'C' ? c.lin.states : c.lin.inputs;
        for (const g of got) dense[rowNames.indexOf(g[1])][colNames.indexOf(g[2])] = Number(g[3]);
        expect(dense).toEqual(rowsOf(c.lin, m));
      }
      if (!haveScipy) return;
      const snippet = exportLinear(c.a, c.point, 'numpy', { sparse: true });
      const tail = '\nimport json, scipy.sparse\nprint(json.dumps({m: {"sparse": scipy.sparse.issparse(M), "nnz": int(M.nnz), "rows": M.toarray().tolist(), "shape": list(M.shape)} for m, M in (("A", A), ("B", B), ("C", C), ("D", D))}))\n';
      const r = spawnSync(py, ['-'], { input: snippet + tail, encoding: 'utf8' });
      expect(r.stderr).toBe('');
      const out = JSON.parse(r.stdout) as Record<M, { sparse: boolean; nnz: number; rows: number[][]; shape: number[] }>;
      for (const m of MATS) {
        expect(out[m].sparse).toBe(true);
        expect(out[m].shape).toEqual(dims(c.lin, m));
        expect(out[m].nnz).toBe(nonZeros(c.lin, m));
        if (out[m].shape[0]) expect(out[m].rows).toEqual(rowsOf(c.lin, m));
      }
    });
  }
  if (!haveScipy) it.skip('SciPy read-back needs Debian python3-scipy (apt-get install -y python3-scipy)', () => {});
  it('poise linearize --sparse writes what exportLinear writes, and refuses formats without a sparse form', async () => {
    const file = path.join(EXAMPLES, 'gantry_crane.poise');
    const a = analyze(fs.readFileSync(file, 'utf8'));
    for (const f of ['json', 'csv', 'numpy'] as const) {
      const io: Io & { stdout: string } = { stdout: '', out(s) { io.stdout += s.endsWith('\n') ? s : s + '\n'; }, err() {} };
      expect(await main(['linearize', file, '--format', f, '--sparse'], io)).toBe(0);
      expect(io.stdout).toBe(exportLinear(a, 'parked_in_wind', f, { sparse: true }));
    }
    const io: Io & { stderr: string } = { stderr: '', out() {}, err(s) { io.stderr += s; } };
    expect(await main(['linearize', file, '--format', 'latex', '--sparse'], io)).toBe(2);
    expect(io.stderr).toMatch(/--sparse needs --format json, csv, numpy/);
  });
});

describe('written as produced', () => {
  it('a 400-tank chain comes in several pieces of whole lines that join to the export', async () => {
    const { tankChain } = await import('../bench/models');
    const { exportChunks, exportLinearModel } = await import('../server/src/core/present/exports');
    const a = analyze(tankChain(400));
    const lin = a.linear('nominal')!;
    const values = a.values(a.point('nominal')!);
    for (const f of EXPORT_FORMATS) {
      const pieces = [...exportChunks(lin, values, f)];
      expect(pieces.length).toBeGreaterThan(1);
      for (const p of pieces) expect(p.endsWith('\n')).toBe(true);
      expect(pieces.join('')).toBe(exportLinearModel(lin, values, f));
    }
    // JSON: one matrix row per line (A and B have 400 rows, C and D one)
    const json = exportLinear(a, 'nominal', 'json');
    expect(json.split('\n').filter((l) => /^ {2}\[/.test(l)).length).toBe(400 + 400 + 1 + 1);
  });
});
