/** The linear model as a system y = C x + D u, x' = A x + B u, and the shared small helpers of this folder. */
import type { LinearModel } from '../../solve/linearizer';
import type { LinearSystem } from './types';

/** The linear model as a system; a model without outputs uses its state components as outputs (C = I). */
export function linearSystem(lin: LinearModel): LinearSystem {
  const { n, m } = lin;
  if (lin.p > 0) {
    return {
      n, m, p: lin.p, A: lin.A, B: lin.B, C: lin.C, D: lin.D, states: lin.states, inputs: lin.inputs, outputs: lin.outputs,
      stateUnits: lin.stateUnits.map(u1), inputUnits: lin.inputUnits.map(u1), outputUnits: lin.outputUnits.map(u1), timeUnit: lin.timeUnit, outputsAreStates: false,
    };
  }
  const C = new Float64Array(n * n);
  for (let i = 0; i < n; i++) C[i * n + i] = 1;
  return {
    n, m, p: n, A: lin.A, B: lin.B, C, D: new Float64Array(n * m), states: lin.states, inputs: lin.inputs, outputs: lin.states.slice(),
    stateUnits: lin.stateUnits.map(u1), inputUnits: lin.inputUnits.map(u1), outputUnits: lin.stateUnits.map(u1), timeUnit: lin.timeUnit, outputsAreStates: true,
  };
}

const u1 = (u: string) => (u === '1' ? '' : u);

/** "cm/(L/s)", "1/min", … : unit of output per unit of input. */
export function perUnit(out: string, inp: string): string {
  const o = out || '1';
  if (!inp) return out;
  const i = /[*/ ]/.test(inp) ? `(${inp})` : inp;
  return `${o}/${i}`;
}

export function frob(a: Float64Array): number {
  let s = 0;
  for (let i = 0; i < a.length; i++) s += a[i] * a[i];
  return Math.sqrt(s);
}

export function transpose(a: Float64Array, r: number, c: number): Float64Array {
  const t = new Float64Array(r * c);
  for (let i = 0; i < r; i++) for (let j = 0; j < c; j++) t[j * r + i] = a[i * c + j];
  return t;
}
