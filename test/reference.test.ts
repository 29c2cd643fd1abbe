/**
 * Every shared reference model through the command line's JSON, against the reference linear models in
 * ../shared/reference/NAME.json. Source of the reference figures: computed outside this project (SymPy 1.14
 * restatement in SI, mpmath Newton, NumPy elimination; see ../shared/reference/README.md). The files are
 * read in place, never copied into the repository.
 *
 * Agreement: relative 1e-6 (the README's stated expectation). Rows and columns are matched by name. Near
 * zero an absolute tolerance applies, scaled by the size of the row it sits in: for a row of A/B the
 * largest |entry| of that row of [A B] in the reference, for a row of C/D that of [C D] (entries of one
 * row share a unit, so this is the natural scale of a rounding error there).
 */
import * as fs from 'fs';
import { beforeAll, describe, expect, it } from 'vitest';
import { ensureBuilt, runCliAsync, type CliResult } from './helpers/cli';
import { matrixNames, readReference, referenceModels, REFERENCE_MODELS, type NamedMatrices } from './helpers/reference';

const REL = 1e-6;
const ABS_OF_ROW = 1e-9;

interface CliJson extends NamedMatrices {
  point: string;
  values: Record<string, { value: number; unit: string }>;
  eigenvalues: { re: number; im: number }[];
}

const models = fs.existsSync(REFERENCE_MODELS) ? referenceModels() : [];

function close(actual: number, expected: number, abs: number): boolean {
  return Math.abs(actual - expected) <= REL * Math.abs(expected) + abs;
}

const rowMax = (...rows: (number[] | undefined)[]) => Math.max(0, ...rows.flatMap((r) => (r ?? []).map(Math.abs)));

/** Compares one matrix by names; returns the list of mismatches (empty when all agree). */
function compareMatrix(
  name: string, got: number[][], gotRows: string[], gotCols: string[],
  ref: number[][], refRows: string[], refCols: string[], rowScale: (i: number) => number,
): string[] {
  const bad: string[] = [];
  refRows.forEach((r, i) => {
    const gi = gotRows.indexOf(r);
    refCols.forEach((c, j) => {
      const gj = gotCols.indexOf(c);
      const want = ref[i][j];
      const have = gi >= 0 && gj >= 0 ? got[gi][gj] : NaN;
      if (!close(have, want, ABS_OF_ROW * rowScale(i))) bad.push(`${name}[${r}, ${c}] = ${have}, reference ${want}`);
    });
  });
  return bad;
}

describe('shared reference models through `poise linearize --format json`', () => {
  const results = new Map<string, CliResult>();
  beforeAll(async () => {
    ensureBuilt();
    const rs = await Promise.all(models.map(({ file }) => runCliAsync(['linearize', file, '--format', 'json'])));
    models.forEach(({ name }, i) => results.set(name, rs[i]));
  });

  it('finds the reference models', () => {
    // the six cases listed in ../shared/reference/README.md's folder
    expect(models.length).toBeGreaterThanOrEqual(6);
  });

  it.each(models.map(({ name }) => name))('%s agrees with its reference JSON', (name) => {
    const ref = readReference(name);
    const r = results.get(name)!;
    expect(r.stderr).toBe('');
    expect(r.code).toBe(0);
    const got = JSON.parse(r.stdout) as CliJson;

    expect(got.point).toBe(ref.point);
    // same names (order may differ)
    expect([...got.states].sort()).toEqual([...ref.states].sort());
    expect([...got.inputs].sort()).toEqual([...ref.inputs].sort());
    expect([...got.outputs].sort()).toEqual([...ref.outputs].sort());

    // values in declared units
    const bad: string[] = [];
    const vmax = Math.max(1, ...Object.values(ref.values).map(Math.abs));
    for (const [k, want] of Object.entries(ref.values)) {
      const have = got.values[k]?.value;
      if (have === undefined || !close(have, want, 1e-12 * vmax)) bad.push(`value ${k} = ${have}, reference ${want}`);
    }

    // A, B, C, D by name
    const abRow = (i: number) => rowMax(ref.A[i], ref.B[i]);
    const cdRow = (i: number) => rowMax(ref.C[i], ref.D[i]);
    for (const m of ['A', 'B', 'C', 'D'] as const) {
      const [gotRows, gotCols] = matrixNames(got, m);
      const [refRows, refCols] = matrixNames(ref, m);
      bad.push(...compareMatrix(m, got[m], gotRows, gotCols, ref[m], refRows, refCols, m === 'A' || m === 'B' ? abRow : cdRow));
    }

    // eigenvalues: each reference eigenvalue matched to the nearest unused computed one
    expect(got.eigenvalues.length).toBe(ref.eig.length);
    const emax = Math.max(0, ...ref.eig.map(([re, im]) => Math.hypot(re, im)));
    const used = new Set<number>();
    for (const [re, im] of ref.eig) {
      let best = -1;
      let bd = Infinity;
      got.eigenvalues.forEach((e, k) => {
        const d = Math.hypot(e.re - re, e.im - im);
        if (!used.has(k) && d < bd) {
          bd = d;
          best = k;
        }
      });
      used.add(best);
      if (!(bd <= REL * Math.hypot(re, im) + ABS_OF_ROW * emax)) bad.push(`eigenvalue ${re}${im < 0 ? '' : '+'}${im}i: nearest computed is ${bd} away`);
    }
    expect(bad).toEqual([]);
  });
});
