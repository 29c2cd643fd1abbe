/**
 * Unit checker: infers the dimension of every expression from the declared units, checks that both
 * sides of each equation agree, that function arguments are dimensionless where they must be, and that
 * every unit text is known. Also evaluates the constants (in SI), since that needs the same unit facts.
 * A file without any unit bracket is nondimensional: nothing is checked and time is dimensionless.
 */
import type * as A from '../syntax/ast';
import { foldChain, someExpr } from '../syntax/walk';
import type { BoundModel, ModelSymbol } from './binder';
import { BUILTIN_CONSTANTS } from './binder';
import { diag, type Diagnostic } from '../diagnostics';
import { applyFn, BUILTIN_ARITY, type FnName } from '../algebra/expr';
import { hasName } from '../names';
import {
  DIMENSIONLESS, ONE_UNIT, SCALED_UNIT_PROBLEM, dimsDiv, dimsEqual, dimsMul, dimsPow, formatDims, isDimensionless, parseUnit,
  type Dims, type UnitInfo,
} from './units';

export interface UnitFacts {
  /** Whether units are checked (false for a nondimensional file). */
  checked: boolean;
  /** Declared unit of each input, state, var and output; for constants, the unit they were written in. */
  units: Map<ModelSymbol, UnitInfo>;
  /** Constants' values in SI (NaN when they could not be evaluated). */
  constValues: Map<ModelSymbol, number>;
  /** Dimension of each constant (inferred from its expression). */
  constDims: Map<ModelSymbol, Dims>;
  /** The model's unit of time (seconds per model time unit in `scale`). */
  time: UnitInfo;
  diagnostics: Diagnostic[];
}

const TIME_DIMS: Dims = [0, 0, 1, 0, 0, 0, 0, 0];
const DIMLESS_FNS = new Set(['exp', 'log', 'log10', 'sin', 'cos', 'tan', 'asin', 'acos', 'atan', 'sinh', 'cosh', 'tanh']);

/**
 * Numeric value of a constant expression in SI (NaN if it is not constant): number literals, built-in
 * constants, declared constants (their SI value from `constant`), + − * / ^ and built-in functions.
 * The one evaluator of constant expressions: constants here, point values and sweep bounds in model.ts.
 */
export function constantValue(e: A.Expr, m: BoundModel, constant: (s: ModelSymbol) => number): number {
  const value = (x: A.Expr): number => {
    switch (x.kind) {
      case 'number': return literalSI(x).value;
      case 'name': {
        if (x.primes) return NaN;
        if (hasName(BUILTIN_CONSTANTS, x.name) && !m.symbols.has(x.name)) return BUILTIN_CONSTANTS[x.name];
        const s = m.symbols.get(x.name);
        return s && s.kind === 'const' ? constant(s) : NaN;
      }
      case 'unary': return x.op === '-' ? -value(x.arg) : x.op === 'not' ? truth(!(value(x.arg) > 0.5), value(x.arg)) : value(x.arg);
      case 'binary':
        return foldChain(x, value, (n, a, b) => {
          switch (n.op) {
            case '+': return a + b;
            case '-': return a - b;
            case '*': return a * b;
            case '/': return a / b;
            case '^': return Math.pow(a, b);
            // a condition is 1 where it holds and 0 where not (choose reads it so)
            case '<': return truth(a < b, a - b);
            case '<=': return truth(a <= b, a - b);
            case '>': return truth(a > b, a - b);
            case '>=': return truth(a >= b, a - b);
            case 'and': return truth(a > 0.5 && b > 0.5, a + b);
            case 'or': return truth(a > 0.5 || b > 0.5, a + b);
          }
          return NaN;
        });
      case 'call': {
        const args = x.args.map(value);
        if (!hasName(BUILTIN_ARITY, x.fn)) return NaN;
        return applyFn(x.fn as FnName, args);
      }
      default: return NaN;
    }
  };
  return value(e);
}

/** 1 or 0 for a condition, NaN when what it compares is not a number. */
const truth = (holds: boolean, operands: number): number => (Number.isNaN(operands) ? NaN : holds ? 1 : 0);

/** The diagnostic for unit text parseUnit rejected: P311 for a number that cannot scale the unit, else P301. */
export function unitProblem(ref: A.UnitRef, detail: string): Diagnostic {
  if (detail.startsWith(SCALED_UNIT_PROBLEM)) return diag('P311', ref.span, { unit: ref.text, detail: detail.slice(SCALED_UNIT_PROBLEM.length) });
  return diag('P301', ref.span, { unit: ref.text, detail });
}

/** Converts a literal `number [unit]` to SI, reporting an unknown unit. */
export function literalSI(e: A.NumberExpr, diagnostics?: Diagnostic[]): { value: number; unit: UnitInfo | undefined } {
  if (!e.unit) return { value: e.value, unit: undefined };
  const u = parseUnit(e.unit.text);
  if (typeof u === 'string') {
    diagnostics?.push(unitProblem(e.unit, u));
    return { value: NaN, unit: undefined };
  }
  return { value: e.value * u.scale + u.offset, unit: u };
}

export function checkUnits(m: BoundModel): UnitFacts {
  const diagnostics: Diagnostic[] = [];
  const units = new Map<ModelSymbol, UnitInfo>();
  const constValues = new Map<ModelSymbol, number>();
  const constDims = new Map<ModelSymbol, Dims>();
  const checked = m.hasUnits;

  // time unit
  let time: UnitInfo = { text: 's', dims: TIME_DIMS, scale: 1, offset: 0 };
  if (!checked) time = { text: '', dims: DIMENSIONLESS, scale: 1, offset: 0 };
  if (m.time) {
    if (!m.time.unit) time = { text: '', dims: DIMENSIONLESS, scale: 1, offset: 0 };
    else {
      const u = parseUnit(m.time.unit.text);
      if (typeof u === 'string') diagnostics.push(unitProblem(m.time.unit, u));
      else if (!dimsEqual(u.dims, TIME_DIMS)) diagnostics.push(diag('P310', m.time.unit.span, { unit: m.time.unit.text }));
      else time = u;
    }
  }

  // declared units
  for (const s of [...m.inputs, ...m.states, ...m.vars, ...m.outputs]) {
    if (!s.unit) {
      units.set(s, ONE_UNIT);
      continue;
    }
    const u = parseUnit(s.unit.text);
    if (typeof u === 'string') {
      diagnostics.push(unitProblem(s.unit, u));
      units.set(s, { ...ONE_UNIT, text: s.unit.text });
    } else units.set(s, u);
  }

  // tables: the units of their breakpoints and values
  const tableDims = new Map<string, { x: Dims | null; y: Dims | null }>();
  for (const t of m.tables.values()) {
    const dimsOf = (ref: A.UnitRef | undefined): Dims | null => {
      if (!ref) return DIMENSIONLESS;
      const u = parseUnit(ref.text);
      if (typeof u === 'string') {
        diagnostics.push(unitProblem(ref, u));
        return null;
      }
      return u.dims;
    };
    tableDims.set(t.name.name, { x: dimsOf(t.xUnit), y: dimsOf(t.yUnit) });
  }

  const derivDims = (d: Dims, k: number): Dims => (k ? dimsDiv(d, dimsPow(time.dims, k)) : d);

  /** Dimension of a name reference (null: unknown). */
  const nameDims = (e: A.NameExpr): Dims | null => {
    if (hasName(BUILTIN_CONSTANTS, e.name) && !m.symbols.has(e.name)) return DIMENSIONLESS;
    const s = m.symbols.get(e.name);
    if (!s) return null;
    if (s.kind === 'const') return constDims.get(s) ?? null;
    const u = units.get(s);
    return u ? derivDims(u.dims, e.primes) : null;
  };

  /** Numeric value of a constant expression in SI (NaN if not constant). */
  const constValue = (e: A.Expr): number => constantValue(e, m, (s) => constValues.get(s) ?? NaN);

  const report = (d: Diagnostic) => {
    if (checked) diagnostics.push(d);
  };

  /** The dims of one binary node from those of its operands (one function for every chain: no closure per node). */
  const combine = (e: A.BinaryExpr, a: Dims | null, b: Dims | null): Dims | null => {
    switch (e.op) {
      case '<':
      case '<=':
      case '>':
      case '>=':
        if (a && b && !dimsEqual(a, b)) report(diag('P322', e.span, { left: formatDims(a), right: formatDims(b) }));
        return null; // a condition has no unit
      case 'and':
      case 'or':
        return null;
      case '+':
      case '-':
        if (a && b && !dimsEqual(a, b)) {
          report(diag('P304', e.span, { left: formatDims(a), right: formatDims(b) }));
          return null;
        }
        return a ?? b;
      case '*': return a && b ? dimsMul(a, b) : a && isZeroLit(e.right) ? a : null;
      case '/': return a && b ? dimsDiv(a, b) : null;
      case '^': {
        if (b && !isDimensionless(b)) report(diag('P306', e.right.span, { unit: formatDims(b) }));
        if (!a) return null;
        if (isDimensionless(a)) return DIMENSIONLESS;
        const p = constValue(e.right);
        if (!Number.isFinite(p)) {
          report(diag('P305', e.span));
          return null;
        }
        return dimsPow(a, p);
      }
    }
    return null;
  };

  /** Infers dims; null means unknown (after an error) or a bare 0 that fits anything. */
  const infer = (e: A.Expr): Dims | null => {
    switch (e.kind) {
      case 'number': {
        if (!e.unit) return e.value === 0 ? null : DIMENSIONLESS;
        const u = parseUnit(e.unit.text);
        if (typeof u === 'string') {
          diagnostics.push(unitProblem(e.unit, u));
          return null;
        }
        return u.dims;
      }
      case 'name': return nameDims(e);
      case 'list':
      case 'reduce':
      case 'error': return null;
      case 'unary': {
        const a = infer(e.arg);
        return e.op === 'not' ? null : a;
      }
      case 'binary': return foldChain(e, infer, combine);
      case 'call': {
        const args = e.args.map(infer);
        const [a, b] = args;
        const table = tableDims.get(e.fn);
        if (table && !hasName(BUILTIN_ARITY, e.fn)) {
          const decl = m.tables.get(e.fn)!;
          if (a && table.x && !dimsEqual(a, table.x) && e.args.length === 1) {
            report(diag('P323', e.args[0].span, { name: e.fn, declared: decl.xUnit ? `[${decl.xUnit.text}] (${formatDims(table.x)})` : formatDims(table.x), actual: formatDims(a) }, { related: [{ span: decl.headerSpan, message: `table ${e.fn}` }] }));
          }
          return table.y;
        }
        if (e.fn === 'choose' || e.fn === 'clamp') {
          // the values: every second argument and the last for choose, all three for clamp
          const values = e.fn === 'clamp' ? args.map((d, k) => [d, k] as const) : args.map((d, k) => [d, k] as const).filter(([, k]) => k % 2 === 1 || k === args.length - 1);
          let first: Dims | null = null;
          for (const [d, k] of values) {
            if (!d) continue;
            if (first && !dimsEqual(first, d)) {
              report(diag('P307', e.args[k].span, { fn: e.fn, left: formatDims(first), right: formatDims(d) }));
              return null;
            }
            first = first ?? d;
          }
          return first;
        }
        if (DIMLESS_FNS.has(e.fn)) {
          if (a && !isDimensionless(a)) report(diag('P303', e.args[0].span, { fn: e.fn, unit: formatDims(a) }));
          return DIMENSIONLESS;
        }
        switch (e.fn) {
          case 'sqrt': return a ? dimsPow(a, 0.5) : null;
          case 'abs': return a;
          case 'sign': return DIMENSIONLESS;
          case 'min':
          case 'max':
          case 'hypot':
          case 'atan2':
            if (a && b && !dimsEqual(a, b)) report(diag('P307', e.span, { fn: e.fn, left: formatDims(a), right: formatDims(b) }));
            return e.fn === 'atan2' ? DIMENSIONLESS : a ?? b;
        }
        return null;
      }
    }
  };

  // constants in order
  for (const s of m.consts) {
    const d = s.decl as A.ConstDecl;
    const dims = infer(d.value) ?? DIMENSIONLESS;
    constDims.set(s, dims);
    const v = constValue(d.value);
    constValues.set(s, v);
    if (!Number.isFinite(v) && !hasError(d.value)) {
      const table = someExpr(d.value, (x) => x.kind === 'call' && m.tables.has(x.fn) && !hasName(BUILTIN_ARITY, x.fn));
      const why = table ? 'a table is read in equations and outputs, not in constants: declare a var and write its equation (k0 = kv(50 [%]))' : 'the value is not a number (check for √ or log of a negative, or an unknown unit)';
      diagnostics.push(diag('P510', d.value.span, { name: s.name, detail: Number.isNaN(v) ? why : 'the value is infinite (division by zero?)' }));
    }
    // the unit the constant was written in (for display): a single literal keeps its unit text
    const lit = d.value.kind === 'number' && d.value.unit ? parseUnit(d.value.unit.text) : undefined;
    if (lit && typeof lit !== 'string') units.set(s, lit);
    else units.set(s, { text: isDimensionless(dims) ? '1' : formatDims(dims), dims, scale: 1, offset: 0 });
  }

  // equations
  for (const eq of m.equations) {
    const a = infer(eq.lhs);
    const b = infer(eq.rhs);
    if (a && b && !dimsEqual(a, b)) {
      report(diag('P302', eq.span, { left: formatDims(a), right: formatDims(b) }, { related: relatedDecls(m, eq) }));
    }
  }
  // outputs
  for (const s of m.outputs) {
    const d = s.decl as A.OutputDecl;
    const a = infer(d.value);
    const u = units.get(s)!;
    if (a && !dimsEqual(a, u.dims)) report(diag('P309', d.value.span, { name: s.name, declared: formatDims(u.dims), actual: formatDims(a) }));
  }
  // point values
  for (const p of m.points) {
    for (const l of p.lines) {
      const s = m.symbols.get(l.name.name);
      const a = infer(l.value);
      if (!s || !a) continue;
      const target = s.kind === 'const' ? constDims.get(s) : units.get(s)?.dims;
      if (!target) continue;
      // a bare number is in the variable's declared unit
      if (isDimensionless(a) && !hasUnitLiteral(l.value)) continue;
      if (!dimsEqual(a, target)) report(diag('P308', l.value.span, { name: s.name, given: formatDims(a), declared: formatDims(target) }));
    }
  }
  // sweep bounds
  for (const sw of m.sweeps) {
    if (!sw.vary) continue;
    const s = m.symbols.get(sw.vary.name.name);
    if (!s) continue;
    const target = s.kind === 'const' ? constDims.get(s) : units.get(s)?.dims;
    for (const e of [sw.vary.from, sw.vary.to]) {
      const a = infer(e);
      if (!a || !target || (isDimensionless(a) && !hasUnitLiteral(e))) continue;
      if (!dimsEqual(a, target)) report(diag('P308', e.span, { name: s.name, given: formatDims(a), declared: formatDims(target) }));
    }
  }
  return { checked, units, constValues, constDims, time, diagnostics };
}

function isZeroLit(e: A.Expr): boolean {
  return e.kind === 'number' && e.value === 0 && !e.unit;
}

export function hasUnitLiteral(e: A.Expr): boolean {
  return someExpr(e, (x) => x.kind === 'number' && !!x.unit);
}

/** Whether an expression holds a syntax error or a unit already reported (P301/P311): no second message. */
function hasError(e: A.Expr): boolean {
  return someExpr(e, (x) => x.kind === 'error' || (x.kind === 'number' && !!x.unit && typeof parseUnit(x.unit.text) === 'string'));
}

function relatedDecls(m: BoundModel, eq: A.EquationStmt) {
  const out: { span: { start: number; end: number }; message: string }[] = [];
  const seen = new Set<string>();
  for (const r of m.references) {
    if (r.span.start >= eq.span.start && r.span.end <= eq.span.end && !seen.has(r.symbol.name)) {
      seen.add(r.symbol.name);
      const u = r.symbol.unit ? `[${r.symbol.unit.text}]` : r.symbol.kind === 'const' ? 'constant' : 'dimensionless';
      out.push({ span: r.symbol.span, message: `${r.symbol.name} ${u}` });
    }
  }
  return out;
}
