/**
 * Compiles symbolic expressions to fast JavaScript functions. The generated source is built only from
 * our own expression tree (numbers, slot indices and a fixed set of operators), never from model text.
 */
import type { Node } from '../algebra/expr';
import { nameTable } from '../names';

const MATH_FN: Readonly<Record<string, string>> = nameTable({
  sqrt: 'M.sqrt', exp: 'M.exp', log: 'M.log', log10: 'M.log10', sin: 'M.sin', cos: 'M.cos', tan: 'M.tan',
  asin: 'M.asin', acos: 'M.acos', atan: 'M.atan', atan2: 'M.atan2', sinh: 'M.sinh', cosh: 'M.cosh', tanh: 'M.tanh',
  abs: 'M.abs', sign: 'M.sign', min: 'M.min', max: 'M.max', hypot: 'M.hypot', pick: 'pick',
});

function lit(v: number): string {
  if (Number.isNaN(v)) return 'NaN';
  if (v === Infinity) return 'Infinity';
  if (v === -Infinity) return '(-Infinity)';
  const s = String(v);
  return v < 0 || Object.is(v, -0) ? `(${s})` : s;
}

export function jsOf(n: Node): string {
  switch (n.t) {
    case 'num': return lit(n.v);
    case 'sym': return `v[${n.id}]`;
    case 'add': return `(${n.args.map(jsOf).join('+')})`;
    case 'mul': return `(${n.args.map(jsOf).join('*')})`;
    case 'pow': {
      const b = jsOf(n.base);
      if (n.exp.t === 'num') {
        const e = n.exp.v;
        if (e === 2) return `sq(${b})`;
        if (e === -1) return `(1/${b})`;
        if (e === -2) return `(1/sq(${b}))`;
        if (e === 0.5) return `M.sqrt(${b})`;
        if (e === -0.5) return `(1/M.sqrt(${b}))`;
        if (e === 3) return `cube(${b})`;
      }
      return `M.pow(${b},${jsOf(n.exp)})`;
    }
    case 'fn': return `${MATH_FN[n.fn]}(${n.args.map(jsOf).join(',')})`;
  }
}

const sq = (x: number) => x * x;
const cube = (x: number) => x * x * x;
const pick = (a: number, b: number, p: number, q: number) => (a <= b ? p : q);

export type VectorFn = (v: Float64Array, out: Float64Array) => void;

const CHUNK = 400;

/** out[i] = nodes[i](v). Large lists are split into several functions (keeps V8 compile times sane). */
export function compileVector(nodes: Node[]): VectorFn {
  const parts: VectorFn[] = [];
  for (let s = 0; s < nodes.length; s += CHUNK) {
    const body: string[] = [];
    for (let i = s; i < Math.min(nodes.length, s + CHUNK); i++) body.push(`out[${i}]=${jsOf(nodes[i])};`);
    // eslint-disable-next-line @typescript-eslint/no-implied-eval
    const factory = new Function('M', 'sq', 'cube', 'pick', `"use strict";return function(v,out){${body.join('\n')}};`);
    parts.push(factory(Math, sq, cube, pick) as VectorFn);
  }
  if (parts.length === 1) return parts[0];
  return (v, out) => {
    for (const p of parts) p(v, out);
  };
}
