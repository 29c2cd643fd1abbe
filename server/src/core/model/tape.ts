/**
 * The interpreted form of a list of expressions: the same arithmetic as the JavaScript compile.ts
 * generates, operation for operation and in the same order (sums and products left to right, the same
 * special powers, the same Math functions), so both give bit-for-bit the same numbers. Building a tape
 * costs one walk over the expression graph; compiling costs that plus writing and parsing the code, so a
 * large model whose Jacobian is evaluated a handful of times (a point, a linearization) is cheaper
 * interpreted; `lazyVector` compiles once it has been called often (sweeps, simulations).
 */
import { tableAt, type FnName, type Node } from '../algebra/expr';
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

const isLeaf = (n: Node) => n.t === 'num' || n.t === 'sym';
/** The arguments of an inner node as the tape reads them (a special power reads its base only). */
const kidsOf = (n: Node): Node[] => (n.t === 'pow' ? (n.exp.t === 'num' && special(n.exp.v) >= 0 ? [n.base] : [n.base, n.exp]) : (n as { args: Node[] }).args);

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
    // as they are numbered; a leaf's argument is a negative reference fixed up once the counts are known
    const cell = new Map<Node, number>();
    const symCell: number[] = [];
    const symIds: number[] = [];
    const numCell = new Map<number, number>();
    const numVals: number[] = [];
    const fnIndex = new Map<string, number>();
    const op: number[] = [];
    const fnOf: number[] = [];
    const argStart: number[] = [0];
    const arg: number[] = [];
    const outRef: number[] = [];
    const leafRef = (n: Node): number => {
      if (n.t === 'sym') {
        let c = symCell[n.id];
        if (c === undefined) {
          symCell[n.id] = c = symIds.length;
          symIds.push(n.id);
        }
        return -1 - 2 * c;
      }
      // a literal of the generated code: -0 is written as (0)
      const v = (n as { v: number }).v === 0 ? 0 : (n as { v: number }).v;
      let c = numCell.get(v);
      if (c === undefined) {
        numCell.set(v, (c = numVals.length));
        numVals.push(v);
      }
      return -2 - 2 * c;
    };
    const number = (n: Node) => {
      let o: number;
      let f = 0;
      switch (n.t) {
        case 'add': o = ADD; break;
        case 'mul': o = MUL; break;
        case 'pow': o = n.exp.t === 'num' && special(n.exp.v) >= 0 ? special(n.exp.v) : POW; break;
        default: {
          const fn = (n as { fn: FnName }).fn;
          const args = (n as { args: Node[] }).args;
          const tab = n.t === 'fn' ? n.tab : undefined;
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
          o = fn === 'pick' && args.length === 4 ? PICK : args.length === 1 ? FN1 : args.length === 2 ? FN2 : FNN;
        }
      }
      op.push(o);
      fnOf.push(f);
      cell.set(n, op.length - 1);
      return op.length - 1;
    };
    // depth first; each open node's arguments gather on `pending` (one map lookup per edge, one entry per node)
    const stackNode: Node[] = [];
    const stackKids: Node[][] = [];
    const stackPos: number[] = [];
    const stackPend: number[] = [];
    const pending: number[] = [];
    for (const r of roots) {
      if (isLeaf(r)) {
        outRef.push(leafRef(r));
        continue;
      }
      const hit = cell.get(r);
      if (hit !== undefined) {
        outRef.push(hit);
        continue;
      }
      stackNode.push(r);
      stackKids.push(kidsOf(r));
      stackPos.push(0);
      stackPend.push(0);
      while (stackNode.length) {
        const top = stackNode.length - 1;
        const ks = stackKids[top];
        let p = stackPos[top];
        let descended = false;
        while (p < ks.length) {
          const x = ks[p++];
          if (isLeaf(x)) {
            pending.push(leafRef(x));
            continue;
          }
          const c = cell.get(x);
          if (c !== undefined) {
            pending.push(c);
            continue;
          }
          stackPos[top] = p;
          stackNode.push(x);
          stackKids.push(kidsOf(x));
          stackPos.push(0);
          stackPend.push(pending.length);
          descended = true;
          break;
        }
        if (descended) continue;
        // every argument known: the node gets its cell, which becomes an argument of its parent
        const from = stackPend[top];
        for (let k = from; k < pending.length; k++) arg.push(pending[k]);
        argStart.push(arg.length);
        pending.length = from;
        const c = number(stackNode[top]);
        stackNode.pop();
        stackKids.pop();
        stackPos.pop();
        stackPend.pop();
        if (stackNode.length) pending.push(c);
        else outRef.push(c);
      }
    }
    const nInner = op.length;
    const nSym = symIds.length;
    const place = (x: number) => (x >= 0 ? x : (x & 1) !== 0 ? nInner + (-1 - x) / 2 : nInner + nSym + (-2 - x) / 2);
    this.val = new Float64Array(nInner + nSym + numVals.length);
    for (let i = 0; i < numVals.length; i++) this.val[nInner + nSym + i] = numVals[i];
    this.symSlot = Int32Array.from(symIds);
    this.op = Uint8Array.from(op);
    this.fnOf = Int32Array.from(fnOf);
    this.argStart = Int32Array.from(argStart);
    this.arg = Int32Array.from(arg, place);
    this.outCell = Int32Array.from(outRef, place);
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
