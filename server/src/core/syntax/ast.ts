/** Syntax tree produced by the parser. Plain data with spans; no semantic information. */
import type { Span } from '../text';

export type Expr = NumberExpr | NameExpr | CallExpr | UnaryExpr | BinaryExpr | ErrorExpr;

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
  /** Span of the name alone (without Δ and primes). */
  nameSpan: Span;
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
  op: '-' | '+';
  arg: Expr;
  span: Span;
}

export type BinaryOp = '+' | '-' | '*' | '/' | '^';

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
}

export type Statement =
  | TimeDecl
  | ConstDecl
  | VarDecl
  | OutputDecl
  | EquationStmt
  | PointBlock
  | LinearBlock
  | SweepBlock;

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
