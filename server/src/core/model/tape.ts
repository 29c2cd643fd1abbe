/**
 * The interpreted form of a list of expressions: the same arithmetic as the JavaScript compile.ts
 * generates, operation for operation and in the same order (sums and products left to right, the same
 * special powers, the same Math functions), so both give bit-for-bit the same numbers. Building a tape
 * costs one walk over the expression graph; compiling costs that plus writing and parsing the code, so a
 * large model whose Jacobian is evaluated a handful of times (a point, a linearization) is cheaper
 * interpreted; `lazyVector` compiles once it has been called often (sweeps, simulations).
 */
import { tableAt, type Fn, type FnName, type Node } from '../algebra/expr';
import { compileVector, type VectorFn } from './compile';
import { nameTable } from '../names';

// operations (inner nodes); leaves are values loaded before the walk
const ADD = 0, MUL = 1, SQ = 2, INV = 3, INVSQ = 4, SQRT = 5, INVSQRT = 6, CUBE = 7, POW = 8, FN1 = 9, FN2 = 10, PICK = 11, FNN = 12;

const pick = (a: number, b: number, p: number, q: number) => (a <= b ? p : q);
const MATH: Readonly<Record<FnName, (...a: number[]) => number>> = nameTable({
  sqrt: Math.sqrt, exp: Math.exp, log: Math.log, log10: Math.log10, sin: Math.sin, cos: Math.cos, tan: Math.tan,
  asin: Math.asin, acos: Math.acos, atan: Math.atan, atan2: Math.atan2, sinh: Math.sinh, cosh: Math.cosh, tanh: Math.tanh,
  abs: Math.abs, sign: Math.sign, min: Math.min, max: Math.max, hypot: Math.hypot, pick,
  // lowered before they reach a tape (choose/clamp to pick/min/max); a table node calls its own interpolant
  clamp: (x: number, lo: number, hi: number) => Math.min(Math.max(x, lo), hi),
  choose: () => NaN,
  table: () => NaN,
});

/** The number of arguments of an inner node as the tape reads them (a special power reads its base only). */
const kidCount = (n: Node): number => (n.t === 'pow' ? (n.exp.t === 'num' && special(n.exp.v) >= 0 ? 1 : 2) : (n as Fn).args.length);
/** Argument k of an inner node (`kidCount` order). */
const kidAt = (n: Node, k: number): Node => (n.t === 'pow' ? (k === 0 ? n.base : n.exp) : (n as Fn).args[k]);

/** A growing list of 32-bit integers. */
class Grow {
  a = new Int32Array(256);
  n = 0;
  push(v: number): void {
    if (this.n === this.a.length) {
      const b = new Int32Array(2 * this.a.length);
      b.set(this.a);
      this.a = b;
    }
    this.a[this.n++] = v;
  }
}

/** Evaluates out[i] = roots[i](v) by walking the graph's inner nodes in dependency order. */
export class Tape {
  /** Cells: one per inner node (in dependency order), then the slot values copied in, then the numbers. */
  private readonly val: Float64Array;
  private readonly symSlot: Int32Array;
  private readonly op: Uint8Array;
  private readonly argStart: Int32Array;
  private readonly arg: Int32Array;
  private readonly fns: ((...a: number[]) => number)[] = [];
  private readonly fnOf: Int32Array;
  private readonly outCell: Int32Array;

  constructor(roots: Node[]) {
    // one walk: inner nodes numbered in post-order (every node after its kids), their arguments written
    // as they are numbered; a leaf's argument is a negative reference fixed up once the counts are known.
    // Hot for large models (a 20,000-equation model has some 150,000 nodes): one map lookup per edge to
    // an inner node, everything else in growing typed arrays.
    const cell = new Map<Node, number>();
    let symCell = new Int32Array(64).fill(-1);
    const symIds = new Grow();
    const numCell = new Map<number, number>();
    const numVals: number[] = [];
    const fnIndex = new Map<string, number>();
    const op = new Grow();
    const fnOf = new Grow();
    const argStart = new Grow();
    argStart.push(0);
    const arg = new Grow();
    const outRef = new Grow();
    const symRef = (id: number): number => {
      if (id >= symCell.length) {
        const b = new Int32Array(Math.max(2 * symCell.length, id + 1)).fill(-1);
        b.set(symCell);
        symCell = b;
      }
      let c = symCell[id];
      if (c < 0) {
        symCell[id] = c = symIds.n;
        symIds.push(id);
      }
      return -1 - 2 * c;
    };
    const numRef = (x: number): number => {
      // a literal of the generated code: -0 is written as (0)
      const v = x === 0 ? 0 : x;
      let c = numCell.get(v);
      if (c === undefined) {
        numCell.set(v, (c = numVals.length));
        numVals.push(v);
      }
      return -2 - 2 * c;
    };
    const number = (n: Node): number => {
      let o: number;
      let f = 0;
      switch (n.t) {
        case 'add': o = ADD; break;
        case 'mul': o = MUL; break;
        case 'pow': o = n.exp.t === 'num' && special(n.exp.v) >= 0 ? special(n.exp.v) : POW; break;
        default: {
          const fn = (n as Fn).fn;
          const nArgs = (n as Fn).args.length;
          const tab = (n as Fn).tab;
          let k = tab ? undefined : fnIndex.get(fn);
          if (tab) {
            // a lookup table (or one of its derivatives): the same interpolant the generated code calls
            k = this.fns.length;
            this.fns.push((x: number) => tableAt(tab, x));
          } else if (k === undefined) {
            fnIndex.set(fn, (k = this.fns.length));
            this.fns.push(MATH[fn]);
          }
          f = k;
          o = fn === 'pick' && nArgs === 4 ? PICK : nArgs === 1 ? FN1 : nArgs === 2 ? FN2 : FNN;
        }
      }
      const c = op.n;
      op.push(o);
      fnOf.push(f);
      cell.set(n, c);
      return c;
    };
    // depth first; each open node's arguments gather on `pending` (one map lookup per edge, one entry per node)
    const stackNode: Node[] = [];
    const stackPos = new Grow();
    const stackPend = new Grow();
    const pending = new Grow();
    for (const r of roots) {
      if (r.t === 'sym') {
        outRef.push(symRef(r.id));
        continue;
      }
      if (r.t === 'num') {
        outRef.push(numRef(r.v));
        continue;
      }
      const hit = cell.get(r);
      if (hit !== undefined) {
        outRef.push(hit);
        continue;
      }
      stackNode.push(r);
      stackPos.push(0);
      stackPend.push(0);
      while (stackNode.length) {
        const top = stackNode.length - 1;
        const nd = stackNode[top];
        const nk = kidCount(nd);
        let p = stackPos.a[top];
        let descended = false;
        while (p < nk) {
          const x = kidAt(nd, p++);
          if (x.t === 'sym') {
            pending.push(symRef(x.id));
            continue;
          }
          if (x.t === 'num') {
            pending.push(numRef(x.v));
            continue;
          }
          const c = cell.get(x);
          if (c !== undefined) {
            pending.push(c);
            continue;
          }
          stackPos.a[top] = p;
          stackNode.push(x);
          stackPos.push(0);
          stackPend.push(pending.n);
          descended = true;
          break;
        }
        if (descended) continue;
        // every argument known: the node gets its cell, which becomes an argument of its parent
        const from = stackPend.a[top];
        for (let k = from; k < pending.n; k++) arg.push(pending.a[k]);
        argStart.push(arg.n);
        pending.n = from;
        const c = number(nd);
        stackNode.pop();
        stackPos.n--;
        stackPend.n--;
        if (stackNode.length) pending.push(c);
        else outRef.push(c);
      }
    }
    const nInner = op.n;
    const nSym = symIds.n;
    const numBase = nInner + nSym;
    this.val = new Float64Array(numBase + numVals.length);
    for (let i = 0; i < numVals.length; i++) this.val[numBase + i] = numVals[i];
    this.symSlot = symIds.a.slice(0, nSym);
    this.op = Uint8Array.from(op.a.subarray(0, nInner));
    this.fnOf = fnOf.a.slice(0, nInner);
    this.argStart = argStart.a.slice(0, argStart.n);
    // leaf references to cells: a slot's after the inner nodes, a number's after the slots
    const place = (ref: Grow): Int32Array => {
      const out = ref.a.slice(0, ref.n);
      for (let i = 0; i < out.length; i++) {
        const x = out[i];
        if (x < 0) out[i] = (x & 1) !== 0 ? nInner + (-1 - x) / 2 : numBase + (-2 - x) / 2;
      }
      return out;
    };
    this.arg = place(arg);
    this.outCell = place(outRef);
  }

  run(v: Float64Array, out: Float64Array): void {
    const { val, symSlot, op, argStart, arg, fns, fnOf, outCell } = this;
    const n = op.length;
    for (let k = 0; k < symSlot.length; k++) val[n + k] = v[symSlot[k]];
    for (let i = 0; i < n; i++) {
      const a0 = argStart[i];
      const a1 = argStart[i + 1];
      let x: number;
      switch (op[i]) {
        case ADD:
          x = val[arg[a0]];
          for (let a = a0 + 1; a < a1; a++) x = x + val[arg[a]];
          break;
        case MUL:
          x = val[arg[a0]];
          for (let a = a0 + 1; a < a1; a++) x = x * val[arg[a]];
          break;
        case SQ: {
          const b = val[arg[a0]];
          x = b * b;
          break;
        }
        case INV: x = 1 / val[arg[a0]]; break;
        case INVSQ: {
          const b = val[arg[a0]];
          x = 1 / (b * b);
          break;
        }
        case SQRT: x = Math.sqrt(val[arg[a0]]); break;
        case INVSQRT: x = 1 / Math.sqrt(val[arg[a0]]); break;
        case CUBE: {
          const b = val[arg[a0]];
          x = b * b * b;
          break;
        }
        case POW: x = Math.pow(val[arg[a0]], val[arg[a0 + 1]]); break;
        case FN1: x = fns[fnOf[i]](val[arg[a0]]); break;
        case FN2: x = fns[fnOf[i]](val[arg[a0]], val[arg[a0 + 1]]); break;
        case PICK: x = val[arg[a0]] <= val[arg[a0 + 1]] ? val[arg[a0 + 2]] : val[arg[a0 + 3]]; break;
        default: {
          // no built-in reaches here (they take 1, 2 or 4 arguments); three arguments written out, never a spread
          x = fns[fnOf[i]](val[arg[a0]], val[arg[a0 + 1]], val[arg[a0 + 2]]);
        }
      }
      val[i] = x;
    }
    for (let i = 0; i < outCell.length; i++) out[i] = val[outCell[i]];
  }
}

/** The operation of a power with this constant exponent, as compile.ts writes it; -1 for Math.pow. */
function special(e: number): number {
  return e === 2 ? SQ : e === -1 ? INV : e === -2 ? INVSQ : e === 0.5 ? SQRT : e === -0.5 ? INVSQRT : e === 3 ? CUBE : -1;
}

/** Evaluations interpreted before a list is compiled to JavaScript. */
export const COMPILE_AFTER = 100;

/**
 * out[i] = nodes[i](v): interpreted from a tape (built on the first call) for the first `compileAfter`
 * calls, compiled to JavaScript after that. Both give the same numbers.
 */
export function lazyVector(nodes: Node[], compileAfter = COMPILE_AFTER): VectorFn {
  let tape: Tape | undefined;
  let compiled: VectorFn | undefined;
  let calls = 0;
  return (v, out) => {
    if (compiled) return compiled(v, out);
    if (++calls > compileAfter) {
      compiled = compileVector(nodes);
      tape = undefined;
      return compiled(v, out);
    }
    (tape ??= new Tape(nodes)).run(v, out);
  };
}
