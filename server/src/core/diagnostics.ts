/**
 * The one catalogue of everything Poise reports. Each entry has a stable code (never reuse or renumber),
 * a severity and a message template that says what to change. Stages call `diag(code, span, args)`.
 */
import type { Span } from './text';

export type Severity = 'error' | 'warning' | 'info';

export interface Related {
  span: Span;
  message: string;
}

export interface Diagnostic {
  code: string;
  severity: Severity;
  span: Span;
  message: string;
  related?: Related[];
  /** Machine-readable facts for quick fixes (e.g. the unknown name). */
  data?: Record<string, unknown>;
}

interface Entry {
  severity: Severity;
  /** Template with {name} placeholders. */
  text: string;
}

export const catalogue = {
  // 1xx syntax
  P101: { severity: 'error', text: 'Unexpected {found}; expected {expected}.' },
  P102: { severity: 'error', text: 'Unclosed parenthesis: add ")" before the end of the line.' },
  P103: { severity: 'error', text: 'Unit bracket is not closed: add "]".' },
  P104: { severity: 'error', text: 'Unexpected character "{ch}": remove it.' },
  P105: { severity: 'error', text: 'A declaration needs a name after "{keyword}".' },
  P106: { severity: 'error', text: 'Indented line outside a block: remove the indentation or put it under a "point", "linear" or "sweep" header.' },
  P107: { severity: 'error', text: 'A point line is "name = value" (fixed) or "name ~ guess" (unknown with a starting guess).' },
  P108: { severity: 'error', text: 'Malformed number "{text}".' },
  P109: { severity: 'error', text: 'The prime applies to a name only: write "x\'" for the derivative of state x.' },
  P110: { severity: 'error', text: 'An equation needs "=" between its two sides.' },
  P111: { severity: 'error', text: '"Δ" is reserved for deviation variables in generated linear blocks; rename "{name}".' },
  P112: { severity: 'error', text: 'Block "{name}" has no lines: indent its lines under the header.' },
  P113: { severity: 'error', text: 'A sweep line is "vary NAME = FROM to TO steps N" with an optional "log".' },
  P114: { severity: 'error', text: 'The number "{text}" is {what} for double precision (magnitudes from about 1e-308 to 1e308) and would be read as {becomes}: write it with a unit that brings it into range (e.g. [nm] or [GW]), or write 0 if zero is meant.' },
  P115: { severity: 'error', text: 'Expression nested deeper than {limit} levels (parentheses, calls, powers, signs): split it with a var.' },
  P120: { severity: 'error', text: 'Empty index: write the element\'s index inside the brackets, e.g. h[1] or h[i+1].' },
  P121: { severity: 'error', text: 'A range "first..last" belongs in a declaration (state h[1..n]) or an each header; here write one index.' },
  P122: { severity: 'error', text: 'An output family is defined element by element: write "each i in 1..n:" and under it "output {name}[i] [unit] = …".' },
  P123: { severity: 'error', text: 'Only equations, outputs and nested "each" blocks go inside an each block; move declarations and points out of it.' },
  // piecewise laws and tables (docs/language.md, "Piecewise laws", "Lookup tables")
  P130: { severity: 'error', text: 'The quoted text is not closed: add a double quote (") before the end of the line.' },
  P131: { severity: 'error', text: 'Table "{name}" reads its rows from a file, so it takes no indented rows: remove them or remove the "from" part.' },
  P132: { severity: 'error', text: 'Table "{name}" cannot be used: {detail}.' },
  P133: { severity: 'error', text: 'The file "{file}" of table "{name}" cannot be read ({where}): put it beside the model or correct the name.' },
  P134: { severity: 'error', text: 'Line {line} of "{file}" (table "{name}"): {detail}.' },
  // parts (docs/language.md, "Parts")
  P135: { severity: 'error', text: '"{word}" cannot go inside a part: a part holds constants, inputs, states, vars, outputs, equations, each blocks and places of other parts; move it out of the part.' },
  P136: { severity: 'error', text: 'An instance is named once: write "as {name}" for one instance or "as {name}[1..n]" for a family of instances.' },

  // 2xx names
  P201: { severity: 'error', text: 'Unknown name "{name}": declare it (const, input, state, var or output) or fix the spelling.' },
  P202: { severity: 'error', text: '"{name}" is already declared as {kind}: rename one of them.' },
  P203: { severity: 'warning', text: '{kind} "{name}" is declared but never used: use it in an equation or remove it.' },
  P204: { severity: 'error', text: '"{name}" is {kind}, not a state, so it has no derivative: declare it with "state" or remove the prime.' },
  P205: { severity: 'error', text: 'State "{name}" is never differentiated: write an equation with {name}\' or declare it as "var".' },
  P206: { severity: 'error', text: '"{name}" is a built-in function: call it with arguments, e.g. {name}(x).' },
  P207: { severity: 'error', text: '{fn} takes {expected} argument(s), not {got}.' },
  P208: { severity: 'error', text: 'Constant "{name}" may use only constants declared before it; "{other}" is {kind}.' },
  P209: { severity: 'error', text: '"{name}" is a reserved word or built-in and cannot be declared: choose another name.' },
  P210: { severity: 'error', text: 'Point "{name}" is defined twice: rename one of them.' },
  P211: { severity: 'error', text: '"{name}" is listed twice in point "{point}": keep one line.' },
  P212: { severity: 'error', text: 'A point value must be a constant expression: "{name}" is {kind}.' },
  P213: { severity: 'error', text: 'Unknown point "{name}": the header names a point that is not defined.' },
  P214: { severity: 'error', text: '"{name}" is a constant: a point may give it another value with "=", not a guess with "~".' },
  P215: { severity: 'error', text: 'Output "{name}" cannot depend on itself.' },
  P216: { severity: 'error', text: 'Derivative order {order} of "{name}" in a point: points are steady states, derivatives are zero there.' },
  P230: { severity: 'error', text: '{what} must be a whole-number constant: {detail}.' },
  P231: { severity: 'error', text: '{what} would make {count} elements (at most {max}): check the range.' },
  P232: { severity: 'error', text: '"{name}" is not a family, so it has no elements: remove the index, or declare it with a range, e.g. {name}[1..n].' },
  P233: { severity: 'error', text: '{element} is outside {family}: change the index or the range of the equation.' },
  P234: { severity: 'error', text: '"{name}" is a family: name one element, e.g. {name}[i] inside an each block, or add them up with sum(each i in …: {name}[i]).' },
  P235: { severity: 'error', text: 'A list {…} gives the values of a family\'s elements: use it only for a family constant or a family in a point.' },
  P236: { severity: 'error', text: 'The range of "{name}" is empty ({from}..{to}): the first index must not exceed the last.' },
  P237: { severity: 'error', text: '"{name}" has {size} elements but the list has {count} values: give one value per element, or one value for all.' },
  P240: { severity: 'error', text: 'Table "{name}" takes one argument, the breakpoint value: write {name}(x), not {got} argument(s).' },
  P241: { severity: 'error', text: 'choose takes a condition and a value for each case and a last value for all other cases (choose(c1, v1, c2, v2, …, otherwise)), so an odd number of arguments from 3, not {got}.' },
  P242: { severity: 'error', text: '"{name}" is a table: call it with the breakpoint value, e.g. {name}(x).' },
  P243: { severity: 'error', text: '"{name}" is already declared as {kind}: rename the table or the other declaration.' },
  P250: { severity: 'error', text: '"{name}" is not declared in part "{part}": a part sees only its own names; declare it in the part (an input to tie from outside, or a const), or fix the spelling.' },
  P251: { severity: 'error', text: 'Unknown part "{name}": define it with "part {name}:" or bring in the file that defines it with parts from "…".' },
  P252: { severity: 'error', text: 'Part "{name}" would contain itself ({chain}): remove the place line that closes the circle.' },
  P253: { severity: 'error', text: '"{name}" is not a constant of part "{part}", so this use cannot change it: {advice}.' },
  P254: { severity: 'error', text: '"{name}" is given twice in this place line: keep one.' },
  P255: { severity: 'error', text: 'No file "{path}" (looked for {resolved}): check the path; it is relative to the folder of the file that names it.' },
  P256: { severity: 'error', text: 'The files bring each other in, in a circle ({chain}): remove one of these parts lines.' },
  P257: { severity: 'error', text: 'Part "{name}" is defined twice ({first} and {second}): rename one, or bring in only the parts needed (parts A, B from "…").' },
  P258: { severity: 'error', text: '"{file}" has no part "{name}": {advice}.' },
  P259: { severity: 'error', text: '"{path}" is a folder of parts: name the parts to take from it, e.g. parts tank, valve from "{path}" (each from its own file tank.poise, valve.poise).' },
  P260: { severity: 'error', text: 'The instance name "{name}" is already used by {what}: choose another name.' },
  P261: { severity: 'error', text: '"{name}" is an instance of part "{part}", not a value: name one of its members, e.g. {name}.{example}.' },
  P262: { severity: 'error', text: 'Part "{name}" is defined in {file} but not brought in here ({why}): write {fix}.' },
  P263: { severity: 'error', text: 'Part "{part}" has no name "{member}" ({written} names an instance of it): its names are {names}; fix the spelling, or declare "{member}" in the part.' },

  // 3xx units
  P301: { severity: 'error', text: 'Unknown unit "{unit}": {detail}' },
  P302: { severity: 'error', text: 'The two sides of the equation have different units: left is {left}, right is {right}.' },
  P303: { severity: 'error', text: 'The argument of {fn} must be dimensionless, but it is {unit}.' },
  P304: { severity: 'error', text: 'Terms of a sum must have the same unit: {left} and {right}.' },
  P305: { severity: 'error', text: 'A power of a quantity with units needs a constant exponent.' },
  P306: { severity: 'error', text: 'The exponent must be dimensionless, but it is {unit}.' },
  P307: { severity: 'error', text: 'The arguments of {fn} must have the same unit: {left} and {right}.' },
  P308: { severity: 'error', text: 'Value for "{name}" is in {given}, which does not convert to its unit {declared}.' },
  P309: { severity: 'error', text: 'Output "{name}" is declared in {declared} but its expression is in {actual}.' },
  P310: { severity: 'error', text: 'Time unit must be a unit of time, not {unit}.' },
  P311: { severity: 'error', text: 'The number in the unit bracket [{unit}] does not make a unit: {detail}.' },
  P320: { severity: 'error', text: 'A condition ({what}) stands where a value is expected: a condition only selects a case, as the first argument of choose (choose(x > 1 [m], a, b)).' },
  P321: { severity: 'error', text: 'A condition is expected here (a comparison such as x > 1 [m], combined with and, or, not), not a value.' },
  P322: { severity: 'error', text: 'The two sides of the comparison have different units: {left} and {right}.' },
  P323: { severity: 'error', text: 'Table "{name}" takes breakpoints in {declared}, but the argument is in {actual}.' },

  // 4xx structure
  P401: { severity: 'error', text: 'The model is unbalanced: {equations} equation(s) for {unknowns} unknown(s) ({detail}). {advice}' },
  P402: { severity: 'error', text: 'This equation is left over: no unknown is left for it to determine ({unknowns} already fixed by other equations). Remove it or add an unknown.' },
  P403: { severity: 'error', text: 'No equation determines {what} "{name}": add an equation for it or remove it.' },
  P404: { severity: 'error', text: 'Structurally singular: equations {equations} all determine only {unknowns}: {advice}' },
  P405: { severity: 'error', text: 'The model has no equations.' },
  P406: { severity: 'error', text: 'This equation has no unknown to determine: it holds only states, inputs and constants, so it constrains the states (a model of index above 1). Differentiate it into an equation for a derivative, or declare one of its states as "var".' },
  P407: { severity: 'info', text: 'Index reduction (model index {index}): Poise differentiates this equation {times} ({method}); each point\'s linear model is an ODE in the states chosen there.' },
  P408: { severity: 'error', text: 'The model\'s index cannot be reduced: {detail} Write the constraint in fewer variables (e.g. an angle instead of two coordinates) or give the constrained variable its own equation.' },
  P409: { severity: 'info', text: 'At point "{point}" the states are {states}; {constrained} follow from the constraints (dummy derivatives {dummies}).' },
  P410: { severity: 'warning', text: 'This constraint holds input {inputs}; differentiating it for index reduction takes the input\'s rate as zero, so the linear model does not carry steps of {inputs} through this constraint. Drive the constrained motion through a force or a first-order lag state instead of the input directly.' },
  P411: { severity: 'error', text: 'At point "{point}" no states can be chosen: {detail} ({equations}). Move the point off this configuration (e.g. not where the constraint\'s gradient vanishes) or write the constraint in other variables.' },
  P412: { severity: 'warning', text: 'Sweep{name}: the states change from {from} to {to} at {at}; the linear models before and after are in different states (compare eigenvalues, not matrix entries).' },

  // 5xx operating point
  P501: { severity: 'error', text: 'Point "{point}" is unbalanced: {equations} equation(s) for {unknowns} unknown(s). {advice}' },
  P502: { severity: 'error', text: 'Point "{point}" did not converge after {iterations} iterations: the largest residual is {residual} in this equation. Give better guesses ("~") or check the model.' },
  P503: { severity: 'error', text: 'Point "{point}" has no real solution from these guesses: {detail}' },
  P504: { severity: 'error', text: 'Domain error at point "{point}": {detail}.' },
  P505: { severity: 'warning', text: 'Not differentiable at point "{point}": {detail}. The linear model {uses}, so it does not hold for moves both ways: move the point off the kink or smooth the model.' },
  P506: { severity: 'error', text: 'At point "{point}" the steady state is not isolated: {names} can move without changing any equation. Fix one of them with "=".' },
  P507: { severity: 'error', text: 'At point "{point}" {what} cannot be solved from the equations (the Jacobian with respect to {names} is singular: index above 1 or a singular algebraic loop).' },
  P508: { severity: 'error', text: 'At point "{point}" this equation has no unknown left and does not hold: residual {residual}{form}. Change a fixed value or free one with "~".' },
  P509: { severity: 'error', text: 'No point to use: add a "point NAME:" block with the values to fix.' },
  P510: { severity: 'error', text: 'Constant "{name}" cannot be evaluated: {detail}.' },
  P511: { severity: 'error', text: 'At point "{point}" the linear model has {what} in {entry}, the row this equation gives: choose units (or a time unit) that bring the model\'s numbers nearer 1, or check the equation for a division by a tiny value.' },
  P512: { severity: 'error', text: 'The value of "{name}" in point "{point}" is not a finite number ({value}): change the expression so that it stays within about 1e-308 to 1e308 in magnitude, or write it with a larger unit.' },
  P513: { severity: 'error', text: 'At point "{point}" the dynamics overflow double precision ({what} is not finite): choose units, and a time unit near the fastest time constant, that bring the model\'s numbers nearer 1.' },
  P520: { severity: 'warning', text: 'At point "{point}" table "{name}" is read at {value}, outside its breakpoints {from} … {to}: it holds its end value {held} there, and the linear model takes slope 0 (no change of the table\'s value). Extend the table or move the point.' },
  P521: { severity: 'error', text: 'At point "{point}" table "{name}" is read at {value}, outside its breakpoints {from} … {to}, and the table is "strict": extend the table, move the point, or write "hold" in its header.' },

  // 6xx generated blocks and sweeps
  P601: { severity: 'warning', text: 'Linear block "{name}" is stale: the model or point changed since it was generated. Regenerate it.' },
  P602: { severity: 'error', text: 'Sweep "{name}": {detail}' },

  // tolerance bands on constants (const NAME = VALUE ± BAND); numbered apart from the blocks above
  P650: { severity: 'error', text: 'A tolerance belongs to a constant written as a value: "{name}" is computed from other constants. Put the tolerance on those constants instead.' },
  P651: { severity: 'error', text: 'The tolerance of "{name}" must be a number with a unit (± 0.2 [m^2]) or a percentage (± 5 %), written without names: {detail}.' },
  P652: { severity: 'error', text: 'The tolerance of "{name}" is {given}, which does not convert to the constant\'s unit {declared}: write it in that unit or as a percentage (± 5 %).' },
  P653: { severity: 'error', text: 'The tolerance of "{name}" must be a finite number of at least 0, not {value}.' },

  // 7xx titles of editor actions (quick fixes, source actions); the severity is not shown
  P701: { severity: 'info', text: 'Regenerate linear block' },
  P702: { severity: 'info', text: 'Change to {name}' },
  P703: { severity: 'info', text: 'Declare "{name}" as {kind}' },
  P704: { severity: 'info', text: 'Fix {names} with "=" in point {point}' },
  P705: { severity: 'info', text: 'Free {name} (write "~") in point {point}' },
  P706: { severity: 'info', text: 'Solve point {point}' },
  P707: { severity: 'info', text: 'Linearize at point {point}' },
  P730: { severity: 'info', text: 'Bring in part {name}: {line}' },

  // 8xx answers of the language server to requests and commands (error responses and editor messages)
  P801: { severity: 'error', text: '{file} is not open in the editor: open the model file first.' },
  P802: { severity: 'error', text: '{file} has no point: add a "point NAME:" block.' },
  P803: { severity: 'error', text: '{file} has no point named "{point}": use one of {names}.' },
  P804: { severity: 'error', text: 'Point "{point}" cannot be solved: {detail}' },
  P805: { severity: 'error', text: 'Point "{point}" cannot be linearized: {detail}' },
  P806: { severity: 'error', text: '{file} has errors: fix them before {action}.' },
  P807: { severity: 'error', text: 'Invalid parameters for {method}: {detail}' },
  P808: { severity: 'error', text: '{method} failed inside the server ({detail}); the server keeps running. Please report it.' },
  P809: { severity: 'error', text: 'The request {method} was cancelled.' },
  P810: { severity: 'error', text: 'Unknown export format "{format}": use one of {formats}.' },
  P811: { severity: 'error', text: 'Sweep "{name}" is incomplete: it needs "from POINT" and a "vary NAME = FROM to TO steps N" line.' },
  P812: { severity: 'error', text: 'The sweep cannot start: {detail}' },
  P813: { severity: 'error', text: 'The editor did not apply "{label}"{reason}.' },
} as const satisfies Record<string, Entry>;

export type Code = keyof typeof catalogue;

export function format(template: string, args: Record<string, unknown>): string {
  return template.replace(/\{(\w+)\}/g, (_, k: string) => (k in args ? String(args[k]) : `{${k}}`));
}

/** The text of a catalogue entry with its placeholders filled (titles and messages that are not diagnostics). */
export function catalogueText(code: Code, args: Record<string, unknown> = {}): string {
  return format(catalogue[code].text, args);
}

export function diag(
  code: Code,
  span: Span,
  args: Record<string, unknown> = {},
  extra: { related?: Related[]; data?: Record<string, unknown>; severity?: Severity } = {},
): Diagnostic {
  const entry: Entry = catalogue[code];
  const d: Diagnostic = {
    code,
    severity: extra.severity ?? entry.severity,
    span,
    message: format(entry.text, args),
  };
  if (extra.related && extra.related.length) d.related = extra.related;
  if (extra.data) d.data = extra.data;
  return d;
}
