/**
 * Architecture invariant: the analysis core (server/src/core/) is pure. It imports nothing from the
 * shells (lsp/, cli/, client/), the protocol libraries, `vscode`, `fs`, `process` or `child_process`.
 */
import * as fs from 'fs';
import * as path from 'path';
import { describe, expect, it } from 'vitest';

const core = path.join(__dirname, '..', 'server', 'src', 'core');

function files(dir: string): string[] {
  return fs.readdirSync(dir, { withFileTypes: true }).flatMap((e) => (e.isDirectory() ? files(path.join(dir, e.name)) : e.name.endsWith('.ts') ? [path.join(dir, e.name)] : []));
}

const FORBIDDEN = [/^vscode/, /^fs$/, /^node:/, /^process$/, /^child_process$/, /^path$/, /^os$/, /\/lsp\//, /\/cli\//, /client/];

describe('the core is pure', () => {
  const all = files(core);
  it('has files', () => expect(all.length).toBeGreaterThan(10));
  for (const f of all) {
    it(path.relative(core, f), () => {
      const src = fs.readFileSync(f, 'utf8');
      const specs = [...src.matchAll(/(?:import|export)[^'"]*?from\s*['"]([^'"]+)['"]|require\(\s*['"]([^'"]+)['"]\s*\)/g)].map((m) => m[1] ?? m[2]);
      for (const s of specs) for (const bad of FORBIDDEN) expect(s, `${path.relative(core, f)} imports ${s}`).not.toMatch(bad);
      expect(src, 'uses process.*').not.toMatch(/\bprocess\.(env|argv|exit|stdout|stderr|cwd)\b/);
    });
  }
});

/**
 * Layers of the core, lowest first. A file may import from its own folder and from any layer below it,
 * never from a layer above (a backward import fails here). `core/text.ts` and `core/diagnostics.ts` are the
 * foundation every layer may use.
 *
 * | layer      | folder                | holds                                                        |
 * |------------|-----------------------|--------------------------------------------------------------|
 * | foundation | core/ (root files)    | spans and line maps, the message catalogue, name tables, the |
 * |            |                       | number formatter, the source host (documents are read by it)  |
 * | numeric    | core/numeric/         | linear algebra, eigenvalues, integrators (knows no model)    |
 * | algebra    | core/algebra/         | expressions: folding constructors, derivatives, printing     |
 * | syntax     | core/syntax/          | lexer, parser, syntax tree                                   |
 * | semantics  | core/semantics/       | binder, units, unit checker                                  |
 * | model      | core/model/           | lowering to residuals, compiled Jacobians, structure         |
 * | solve      | core/solve/           | operating point, linearization                               |
 * | pipeline   | core/pipeline/        | the analysis of a document (`analyze`) and its caches        |
 * | analysis   | core/analysis/        | dynamics, simulation, sweeps, report data, symbolic form     |
 * | present    | core/present/         | text/HTML/SVG/exports: renderings of plain data              |
 * | services   | core/services/        | editor features over an analysis                             |
 */
export const LAYERS = ['foundation', 'numeric', 'algebra', 'syntax', 'semantics', 'model', 'solve', 'pipeline', 'analysis', 'present', 'services'] as const;

function layerOf(file: string): number {
  const rel = path.relative(core, file).split(path.sep);
  const name = rel.length === 1 ? 'foundation' : rel[0];
  const i = (LAYERS as readonly string[]).indexOf(name);
  if (i < 0) throw new Error(`${path.relative(core, file)} is in no layer: add its folder to LAYERS`);
  return i;
}

function coreImports(file: string): string[] {
  const src = fs.readFileSync(file, 'utf8');
  return [...src.matchAll(/(?:import|export)[^'"]*?from\s*['"](\.[^'"]+)['"]/g)].map((m) => {
    const p = path.resolve(path.dirname(file), m[1]);
    return fs.existsSync(p + '.ts') ? p + '.ts' : path.join(p, 'index.ts');
  });
}

/** Backward imports still to be removed; must end empty (issue: one home for each concept). */
const PENDING = new Set<string>([]);

describe('the core is layered', () => {
  const all = files(core);
  it('every import goes to the same layer or one below', () => {
    const bad: string[] = [];
    for (const f of all) {
      for (const t of coreImports(f)) {
        if (!t.startsWith(core)) continue;
        const edge = `${path.relative(core, f)} -> ${path.relative(core, t)}`;
        if (layerOf(t) > layerOf(f) && !PENDING.has(edge)) bad.push(`${edge} (${LAYERS[layerOf(f)]} imports ${LAYERS[layerOf(t)]})`);
      }
    }
    expect(bad).toEqual([]);
  });
});

describe('no import cycles in server/src', () => {
  const src = path.join(__dirname, '..', 'server', 'src');
  const all = files(src);
  it('finds no cycle (Tarjan, strongly connected components of the import graph)', () => {
    const graph = new Map(all.map((f) => [f, coreImports(f).filter((t) => t.startsWith(src) && fs.existsSync(t))]));
    // Iterative Tarjan: every component with more than one file is a cycle.
    const index = new Map<string, number>();
    const low = new Map<string, number>();
    const onStack = new Set<string>();
    const stack: string[] = [];
    const cycles: string[][] = [];
    let next = 0;
    for (const start of all) {
      if (index.has(start)) continue;
      const work: [string, number][] = [[start, 0]];
      while (work.length) {
        const top = work[work.length - 1];
        const [v, i] = top;
        if (i === 0) {
          index.set(v, next);
          low.set(v, next++);
          stack.push(v);
          onStack.add(v);
        }
        const edges = graph.get(v) ?? [];
        if (i < edges.length) {
          top[1]++;
          const w = edges[i];
          if (!index.has(w)) work.push([w, 0]);
          else if (onStack.has(w)) low.set(v, Math.min(low.get(v)!, index.get(w)!));
          continue;
        }
        work.pop();
        if (work.length) {
          const u = work[work.length - 1][0];
          low.set(u, Math.min(low.get(u)!, low.get(v)!));
        }
        if (low.get(v) === index.get(v)) {
          const comp: string[] = [];
          let w: string;
          do {
            w = stack.pop()!;
            onStack.delete(w);
            comp.push(path.relative(src, w));
          } while (w !== v);
          if (comp.length > 1) cycles.push(comp.sort());
        }
      }
    }
    const known = new Set(PENDING_CYCLES);
    expect(cycles.map((c) => c.join(' <-> ')).filter((c) => !known.has(c))).toEqual([]);
  });
});

/** Import cycles still to be broken; must end empty. */
const PENDING_CYCLES: string[] = [];
