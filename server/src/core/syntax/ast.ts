/** Syntax tree produced by the parser. Plain data with spans; no semantic information. */
import type { Span } from '../text';

export type Expr = NumberExpr | NameExpr | CallExpr | UnaryExpr | BinaryExpr | ListExpr | ReduceExpr | ErrorExpr;

export interface NumberExpr {
  kind: 'number';
  value: number;
  text: string;
  /** The unit written in brackets after the number, if any. */
  unit?: UnitRef;
  span: Span;
}

export interface UnitRef {
  text: string;
  span: Span; // including the brackets
}

export interface NameExpr {
  kind: 'name';
  name: string;
  /** Number of primes (derivative order). */
  primes: number;
  /** Written with a leading Δ (deviation variable). */
  delta: boolean;
  span: Span;
  /** Span of the name alone (without Δ and primes; with its index when it has one). */
  nameSpan: Span;
  /** An element of a family, `h[i+1]`: the index expression (integer arithmetic on index names and constants). */
  index?: Expr;
  /** A name inside an element of a family of instances: `.level` in `cell[i].level`. */
  member?: Member;
}

/** `.NAME` or `.NAME[index]` after an element of a family of instances (`cell[i].level`, `cell[i].h[j]`). */
export interface Member {
  /** The name after the dot (itself possibly qualified: `pump.speed`). */
  name: string;
  span: Span;
  index?: Expr;
  member?: Member;
}

/** `{a, b, c}`: the values of a family's elements, in order (constants and point lines only). */
export interface ListExpr {
  kind: 'list';
  items: Expr[];
  /** The unit written after the closing brace, applying to every item without one. */
  unit?: UnitRef;
  span: Span;
}

/** An inclusive index range `from..to`. */
export interface IndexRange {
  from: Expr;
  to: Expr;
  span: Span;
}

/** `sum(each i in 1..n: q[i])` (or `product`): a reduction over an index range. */
export interface ReduceExpr {
  kind: 'reduce';
  op: 'sum' | 'product';
  opSpan: Span;
  index: Ident;
  range: IndexRange;
  body: Expr;
  span: Span;
}

export interface CallExpr {
  kind: 'call';
  fn: string;
  fnSpan: Span;
  args: Expr[];
  span: Span;
}

export interface UnaryExpr {
  kind: 'unary';
  /** `not` negates a condition (docs/language.md, "Piecewise laws"). */
  op: '-' | '+' | 'not';
  arg: Expr;
  span: Span;
}

/** Arithmetic, comparisons (a condition from two values) and `and`/`or` (a condition from two conditions). */
export type BinaryOp = '+' | '-' | '*' | '/' | '^' | CompareOp | 'and' | 'or';
export type CompareOp = '<' | '<=' | '>' | '>=';

export interface BinaryExpr {
  kind: 'binary';
  op: BinaryOp;
  left: Expr;
  right: Expr;
  span: Span;
}

export interface ErrorExpr {
  kind: 'error';
  span: Span;
}

export interface Ident {
  name: string;
  span: Span;
  /** A family's index range in a declaration (`state h[1..n]`), or a single element (`state h[3]`). */
  range?: IndexRange;
  /** An element named with an index expression (`output lvl[i]` inside an each block). */
  index?: Expr;
  /** A member of an element of a family of instances (`state cell[3].level` in an expanded model). */
  member?: Member;
}

export type Statement =
  | TimeDecl
  | ConstDecl
  | VarDecl
  | OutputDecl
  | EquationStmt
  | PointBlock
  | LinearBlock
  | SweepBlock
  | EachBlock
  | TableDecl
  | PartBlock
  | PlaceStmt
  | PartsFrom;

/**
 * `table NAME [x unit] to [y unit] [linear|monotone] [hold|strict]:` with indented rows `x  y`, or
 * `… from "file.csv"`: a lookup table, called as NAME(x) (docs/language.md, "Lookup tables").
 */
export interface TableDecl {
  kind: 'table';
  name: Ident;
  xUnit?: UnitRef;
  yUnit?: UnitRef;
  interpolation: 'linear' | 'monotone';
  /** Outside the breakpoints: hold the end value (a warning at a point), or refuse the point (an error). */
  outside: 'hold' | 'strict';
  /** Rows written in the model (breakpoint, value), in the units of the header. */
  rows: { x: number; y: number; span: Span }[];
  /** `from "file.csv"`: the file's name as written and the span of the quoted text. */
  file?: { text: string; span: Span };
  span: Span;
  headerSpan: Span;
}

/** `part NAME:` and its indented lines: a named piece of model placed under instance names. */
export interface PartBlock {
  kind: 'part';
  name: Ident;
  /** Declarations, equations, outputs, each blocks and places of other parts. */
  body: Statement[];
  span: Span;
  headerSpan: Span;
}

/** One `NAME = VALUE` after `with` in a place line: a constant of the part given another value for this use. */
export interface Override {
  name: Ident;
  value: Expr;
  span: Span;
}

/** `place PART as NAME [with NAME = VALUE, …]`; `as NAME[1..n]` places a family of instances. */
export interface PlaceStmt {
  kind: 'place';
  part: Ident;
  /** The instance's name; with a range for a family of instances. */
  name: Ident;
  overrides: Override[];
  span: Span;
}

/** `parts from "FILE"` or `parts A, B from "FILE or FOLDER"`: parts defined in other files. */
export interface PartsFrom {
  kind: 'parts';
  /** The parts named (empty: every part of the file). */
  names: Ident[];
  path: { text: string; span: Span };
  span: Span;
}

/** `each i in 1..n, j in 1..m:` with indented equations (or one equation after the colon). */
export interface EachBlock {
  kind: 'each';
  indices: { name: Ident; range: IndexRange }[];
  body: Statement[];
  span: Span;
  headerSpan: Span;
}

export interface TimeDecl {
  kind: 'time';
  unit?: UnitRef;
  span: Span;
}

export interface ConstDecl {
  kind: 'const';
  name: Ident;
  value: Expr;
  span: Span;
  /** `± 5 %` or `± 0.2 [unit]` after the value: how far the real constant may lie from it. */
  tolerance?: ToleranceBand;
}

/** A tolerance band: `value` is the half-width, in % of the constant when `percent`, else in the constant's unit. */
export interface ToleranceBand {
  value: Expr;
  percent: boolean;
  /** From "±" to the end of the band. */
  span: Span;
}

export type VarKind = 'input' | 'state' | 'var';

export interface VarDecl {
  kind: VarKind;
  names: Ident[];
  unit?: UnitRef;
  span: Span;
}

export interface OutputDecl {
  kind: 'output';
  name: Ident;
  unit?: UnitRef;
  value: Expr;
  span: Span;
}

export interface EquationStmt {
  kind: 'equation';
  lhs: Expr;
  rhs: Expr;
  span: Span;
  /** Span of the "=" sign. */
  eqSpan: Span;
}

export interface PointLine {
  name: Ident;
  /** An element written with its index (`h[3] = 1 [m]`). */
  index?: Expr;
  mode: 'fixed' | 'guess';
  value: Expr;
  primes: number;
  span: Span;
}

export interface PointBlock {
  kind: 'point';
  name: Ident;
  lines: PointLine[];
  span: Span; // header through last line
  headerSpan: Span;
}

export interface LinearAt {
  name: Ident;
  value: Expr;
  span: Span;
}

export interface LinearBlock {
  kind: 'linear';
  name: Ident; // the point it was generated from
  digest?: { text: string; span: Span };
  at: LinearAt[];
  equations: EquationStmt[];
  span: Span;
  headerSpan: Span;
}

export interface SweepBlock {
  kind: 'sweep';
  name: Ident;
  point?: Ident;
  vary?: { name: Ident; from: Expr; to: Expr; steps: number; stepsSpan: Span; log: boolean; span: Span };
  span: Span;
  headerSpan: Span;
}

export interface ModelFile {
  statements: Statement[];
  comments: Span[];
  length: number;
}
