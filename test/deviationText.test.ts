/**
 * The deviation equations' text (server/src/core/solve/linearizer.ts deviationEquations) writes each
 * coefficient's magnitude as the signed text without its sign when digits ≤ 15: rounding to d ≤ 15
 * significant digits is idempotent for doubles (IEEE 754 binary64 carries 15.95 decimal digits, so the
 * double nearest a 15-digit decimal prints back to it; ECMA-262 Number.prototype.toPrecision). Checked
 * here against the two-step formula the text was first written with, on random doubles of every
 * magnitude and on the equations of a tank chain at several digit counts, including 16 and 17.
 */
import { describe, expect, it } from 'vitest';
import { formatNumber } from '../server/src/core/numbers';
import { deviationEquations, type LinearModel } from '../server/src/core/solve/linearizer';
import { analyze } from '../server/src/core/pipeline/analysis';
import { tankChain } from '../bench/models';
import { rng } from './helpers/matrices';

/** The first formula: round, then format the rounded magnitude again. */
function reference(lin: LinearModel, digits: number): string[] {
  const out: string[] = [];
  const { A, B, C, D } = lin.sparse;
  const row = (lhs: string, M: typeof A, N: typeof A, i: number) => {
    const terms: { coef: number; name: string }[] = [];
    for (let t = M.rowPtr[i]; t < M.rowPtr[i + 1]; t++) if (M.values[t] !== 0) terms.push({ coef: M.values[t], name: lin.states[M.colIdx[t]] });
    for (let t = N.rowPtr[i]; t < N.rowPtr[i + 1]; t++) if (N.values[t] !== 0) terms.push({ coef: N.values[t], name: lin.inputs[N.colIdx[t]] });
    let text = '';
    terms.forEach((t, k) => {
      const c = Number(formatNumber(t.coef, digits));
      const mag = Math.abs(c);
      const coefText = mag === 1 ? '' : `${formatNumber(mag, digits)}*`;
      text += `${c < 0 ? (k === 0 ? '-' : ' - ') : k === 0 ? '' : ' + '}${coefText}Δ${t.name}`;
    });
    out.push(`${lhs} = ${text || '0'}`);
  };
  const index = new Map(lin.states.map((s, i) => [s, i]));
  for (let i = 0; i < lin.n; i++) {
    const j = index.get(lin.states[i] + "'");
    let only = j !== undefined;
    if (j !== undefined) {
      let hit = false;
      for (let t = A.rowPtr[i]; t < A.rowPtr[i + 1]; t++) if (A.values[t] !== 0) (A.colIdx[t] === j ? (hit = true) : (only = false));
      for (let t = B.rowPtr[i]; t < B.rowPtr[i + 1]; t++) if (B.values[t] !== 0) only = false;
      only &&= hit;
    }
    if (!only) row(`Δ${lin.states[i]}'`, A, B, i);
  }
  for (let i = 0; i < lin.p; i++) row(`Δ${lin.outputs[i]}`, C, D, i);
  return out;
}

describe('deviation equation text', () => {
  it('rounding to d ≤ 15 significant digits is idempotent: |rounded| prints as the signed text without its sign', () => {
    const r = rng(7);
    for (let k = 0; k < 20000; k++) {
      const v = (r() - 0.5) * 10 ** Math.floor(r() * 80 - 40);
      if (v === 0) continue;
      const d = 1 + (k % 15);
      const signed = formatNumber(v, d);
      expect(formatNumber(Math.abs(Number(signed)), d)).toBe(v < 0 ? signed.slice(1) : signed);
    }
  });

  it('the equations of a tank chain match the two-step formula at 3, 4, 6, 15, 16 and 17 digits', () => {
    const a = analyze(tankChain(50));
    const lin = a.linear('nominal')!;
    for (const d of [3, 4, 6, 15, 16, 17]) expect(deviationEquations(lin, d).map((e) => e.text)).toEqual(reference(lin, d));
  });
});
