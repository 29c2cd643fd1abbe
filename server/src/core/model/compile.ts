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
 *
 * Hot for large models (a 20,000-equation model has some 200,000 nodes): the inner nodes are numbered
 * once (one map lookup per edge), and everything after that works on arrays by number; leaves (numbers
 * and slots) are never numbered, their code is written where they are used.
 */
class Emitter {
  /** Number of each inner node (not numbers or slots). */
  private readonly index = new Map<Node, number>();
  private readonly nodes: Node[] = [];
  private readonly uses: number[] = [];
  /** Kids of inner node i: kid[kidStart[i] .. kidStart[i + 1]), an inner node's number or -1 for a leaf. */
  private readonly kidStart: number[] = [0];
  private readonly kid: number[] = [];
  private readonly code: (string | undefined)[] = [];
  private readonly height: number[] = [];
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
      if (n.t === 'num' || n.t === 'sym') continue;
      const i = this.index.get(n);
      if (i !== undefined) {
        this.uses[i]++;
        continue;
      }
      this.index.set(n, this.nodes.length);
      this.nodes.push(n);
      this.uses.push(1);
      this.code.push(undefined);
      this.height.push(0);
      if (n.t === 'pow') stack.push(n.base, n.exp);
      else for (const k of n.args) stack.push(k);
    }
    const { index, kid, kidStart } = this;
    for (const n of this.nodes) {
      for (const k of kids(n)) kid.push(k.t === 'num' || k.t === 'sym' ? -1 : index.get(k)!);
      kidStart.push(kid.length);
    }
  }

  /** The code of `root`; statements for the temporaries it needs first are appended to `body`. */
  expr(root: Node, body: string[]): string {
    if (root.t === 'num' || root.t === 'sym') return codeOf(root, [], this.table);
    const { nodes, kid, kidStart, code, height, uses } = this;
    const r = this.index.get(root)!;
    if (code[r] !== undefined) return code[r]!;
    const stack: number[] = [r];
    const open: boolean[] = [false];
    while (stack.length) {
      const top = stack.length - 1;
      const i = stack[top];
      if (code[i] !== undefined) {
        stack.pop();
        open.pop();
        continue;
      }
      const k0 = kidStart[i];
      const k1 = kidStart[i + 1];
      if (!open[top]) {
        open[top] = true;
        for (let k = k1 - 1; k >= k0; k--) {
          const j = kid[k];
          if (j >= 0 && code[j] === undefined) {
            stack.push(j);
            open.push(false);
          }
        }
        continue;
      }
      stack.pop();
      open.pop();
      const n = nodes[i];
      let h = 0;
      const cs: string[] = [];
      if (k1 > k0) {
        const ks = kids(n);
        for (let k = k0; k < k1; k++) {
          const j = kid[k];
          if (j < 0) {
            cs.push(codeOf(ks[k - k0], [], this.table));
            if (h < 1) h = 1;
          } else {
            cs.push(code[j]!);
            if (height[j] + 1 > h) h = height[j] + 1;
          }
        }
      }
      let c = codeOf(n, cs, this.table);
      if ((uses[i] > 1 && k1 > k0) || h >= INLINE_DEPTH) {
        const w = `w[${this.temps++}]`;
        body.push(`${w}=${c};`);
        c = w;
        h = 0;
      }
      code[i] = c;
      height[i] = h;
    }
    return code[r]!;
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
