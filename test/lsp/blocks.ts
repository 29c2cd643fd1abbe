/**
 * Reads a generated linear block back from model text with the core's parser (the block is model
 * language): its header, `at` values and the coefficients of its deviation equations, by name.
 */
import { analyze } from '../../server/src/core/pipeline/analysis';
import type * as A from '../../server/src/core/syntax/ast';

export interface ReadBlock {
  headerLine: string;
  digest: string;
  /** name → value and unit text as written in the `at` lines. */
  at: Map<string, { value: number; unit: string }>;
  /** Row (e.g. "level'" for Δlevel', "level_cm" for Δlevel_cm) → column name → coefficient. */
  rows: Map<string, Map<string, number>>;
  /** How many blocks the text has for this point. */
  count: number;
}

function numberOf(e: A.Expr): { value: number; unit: string } {
  if (e.kind === 'number') return { value: e.value, unit: e.unit?.text ?? '' };
  if (e.kind === 'unary' && e.arg.kind === 'number') return { value: (e.op === '-' ? -1 : 1) * e.arg.value, unit: e.arg.unit?.text ?? '' };
  throw new Error(`not a number: ${e.kind}`);
}

const dname = (e: A.Expr): string => {
  if (e.kind !== 'name' || !e.delta) throw new Error(`expected a Δ name, got ${e.kind}`);
  return e.name + "'".repeat(e.primes);
};

/** Terms of a sum of `c*Δx`, `Δx`, `-Δx`, `-c*Δx`. */
function terms(e: A.Expr, sign: number, out: Map<string, number>): void {
  if (e.kind === 'binary' && (e.op === '+' || e.op === '-')) {
    terms(e.left, sign, out);
    terms(e.right, e.op === '-' ? -sign : sign, out);
  } else if (e.kind === 'unary') {
    terms(e.arg, e.op === '-' ? -sign : sign, out);
  } else if (e.kind === 'binary' && e.op === '*') {
    out.set(dname(e.right), sign * numberOf(e.left).value);
  } else if (e.kind === 'number' && e.value === 0) {
    // "Δx' = 0"
  } else {
    out.set(dname(e), sign);
  }
}

export function readBlock(text: string, point: string): ReadBlock | undefined {
  const a = analyze(text);
  const blocks = a.bound.linears.filter((l) => l.name.name === point);
  const b = blocks[0];
  if (!b) return undefined;
  const at = new Map<string, { value: number; unit: string }>();
  for (const x of b.at) at.set(x.name.name, numberOf(x.value));
  const rows = new Map<string, Map<string, number>>();
  for (const eq of b.equations) {
    const m = new Map<string, number>();
    terms(eq.rhs, 1, m);
    rows.set(dname(eq.lhs), m);
  }
  const headerLine = a.lines.lineText(a.lines.position(b.headerSpan.start).line);
  return { headerLine, digest: b.digest?.text ?? '', at, rows, count: blocks.length };
}
