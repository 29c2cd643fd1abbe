/**
 * Compiles symbolic expressions to fast JavaScript functions. The generated source is built only from
 * our own expression tree (numbers, slot indices and a fixed set of operators), never from model text.
 */
import { tableAt, type Node, type TableRef } from '../algebra/expr';
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

/** Direct sub-expressions (the base before the exponent). */
function kids(n: Node): Node[] {
  switch (n.t) {
    case 'num': case 'sym': return [];
    case 'pow': return [n.base, n.exp];
    default: return n.args;
  }
}

/** JavaScript for one node from the code of its sub-expressions (in `kids` order); `table` numbers a table node's function. */
function codeOf(n: Node, c: string[], table: (r: TableRef) => number): string {
  switch (n.t) {
    case 'num': return lit(n.v);
    case 'sym': return `v[${n.id}]`;
    case 'add': return `(${c.join('+')})`;
    case 'mul': return `(${c.join('*')})`;
    case 'pow': {
      const b = c[0];
      if (n.exp.t === 'num') {
        const e = n.exp.v;
        if (e === 2) return `sq(${b})`;
        if (e === -1) return `(1/${b})`;
        if (e === -2) return `(1/sq(${b}))`;
        if (e === 0.5) return `M.sqrt(${b})`;
        if (e === -0.5) return `(1/M.sqrt(${b}))`;
        if (e === 3) return `cube(${b})`;
      }
      return `M.pow(${b},${c[1]})`;
    }
    case 'fn': return n.tab ? `T[${table(n.tab)}](${c[0]})` : `${MATH_FN[n.fn]}(${c.join(',')})`;
  }
}

/** Nodes nested deeper than this inside one statement are computed into a temporary first. */
const INLINE_DEPTH = 40;

/**
 * Straight-line code for a list of expressions. A sub-expression used more than once (derivatives share
 * them with the residual and with each other) is computed once into a temporary `w[k]`, and so is one
 * nested deeper than INLINE_DEPTH: the code grows with the size of the expression graph, not of its
 * unfolded tree, and never nests deeply (engines parse nested code recursively). Every walk here uses an
 * explicit stack.
 */
class Emitter {
  private readonly uses = new Map<Node, number>();
  private readonly done = new Map<Node, { code: string; height: number }>();
  temps = 0;
  /** The table functions the code calls as T[k](x). */
  readonly tables: ((x: number) => number)[] = [];
  private readonly table = (r: TableRef): number => {
    const k = `${r.order}`;
    let perSource = this.sources.get(r.source);
    if (!perSource) this.sources.set(r.source, (perSource = new Map()));
    let i = perSource.get(k);
    if (i === undefined) {
      i = this.tables.length;
      this.tables.push((x) => tableAt(r, x));
      perSource.set(k, i);
    }
    return i;
  };
  private readonly sources = new Map<TableRef['source'], Map<string, number>>();

  constructor(roots: Node[]) {
    const stack: Node[] = [...roots];
    while (stack.length) {
      const n = stack.pop()!;
      const u = this.uses.get(n);
      this.uses.set(n, (u ?? 0) + 1);
      if (u === undefined) for (const k of kids(n)) stack.push(k);
    }
  }

  /** The code of `root`; statements for the temporaries it needs first are appended to `body`. */
  expr(root: Node, body: string[]): string {
    const stack: [Node, boolean][] = [[root, false]];
    while (stack.length) {
      const top = stack[stack.length - 1];
      const n = top[0];
      if (this.done.has(n)) {
        stack.pop();
        continue;
      }
      const ks = kids(n);
      if (!top[1]) {
        top[1] = true;
        for (let i = ks.length - 1; i >= 0; i--) if (!this.done.has(ks[i])) stack.push([ks[i], false]);
        continue;
      }
      stack.pop();
      let height = 0;
      const cs: string[] = [];
      for (const k of ks) {
        const d = this.done.get(k)!;
        cs.push(d.code);
        if (d.height + 1 > height) height = d.height + 1;
      }
      let code = codeOf(n, cs, this.table);
      const shared = (this.uses.get(n) ?? 0) > 1 && ks.length > 0;
      if (shared || height >= INLINE_DEPTH) {
        const w = `w[${this.temps++}]`;
        body.push(`${w}=${code};`);
        code = w;
        height = 0;
      }
      this.done.set(n, { code, height });
    }
    return this.done.get(root)!.code;
  }
}

/** JavaScript for one expression (temporaries declared inside), for inspection and tests. */
export function jsOf(n: Node): string {
  const e = new Emitter([n]);
  const body: string[] = [];
  const code = e.expr(n, body);
  return body.length ? `(()=>{const w=new Float64Array(${e.temps});${body.join('')}return ${code};})()` : code; // tables appear as T[k]
}

const sq = (x: number) => x * x;
const cube = (x: number) => x * x * x;
const pick = (a: number, b: number, p: number, q: number) => (a <= b ? p : q);

export type VectorFn = (v: Float64Array, out: Float64Array) => void;

const CHUNK = 400;
/** A chunk also ends once its code is this long (characters), so one function never gets huge. */
const CHUNK_CHARS = 200_000;

/** out[i] = nodes[i](v). Large lists are split into several functions (keeps V8 compile times sane). */
export function compileVector(nodes: Node[]): VectorFn {
  const em = new Emitter(nodes);
  const bodies: string[][] = [];
  let body: string[] = [];
  let chars = 0;
  let count = 0;
  for (let i = 0; i < nodes.length; i++) {
    const before = body.length;
    const code = em.expr(nodes[i], body);
    body.push(`out[${i}]=${code};`);
    for (let k = before; k < body.length; k++) chars += body[k].length;
    count++;
    if (count >= CHUNK || chars >= CHUNK_CHARS) {
      bodies.push(body);
      body = [];
      chars = 0;
      count = 0;
    }
  }
  if (body.length || !bodies.length) bodies.push(body);
  // temporaries are shared by the chunks, which always run in order on the same v
  const w = new Float64Array(em.temps);
  const parts: VectorFn[] = bodies.map((b) => {
    // eslint-disable-next-line @typescript-eslint/no-implied-eval
    const factory = new Function('M', 'sq', 'cube', 'pick', 'w', 'T', `"use strict";return function(v,out){${b.join('\n')}};`);
    return factory(Math, sq, cube, pick, w, em.tables) as VectorFn;
  });
  if (parts.length === 1) return parts[0];
  return (v, out) => {
    for (const p of parts) p(v, out);
  };
}
