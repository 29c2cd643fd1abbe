/**
 * Where a solved point sits on a switch, a clamp limit or a table's breakpoint, or outside a table
 * (docs/language.md, "Piecewise laws", "Lookup tables"): the one-sided slopes on either side, in declared
 * units, and which of them the linear model uses (the derivative rules of algebra/expr.ts: a pick takes its
 * first branch at a tie; a table the mean of its two slopes at a breakpoint, numeric/interpolate.ts).
 */
import * as E from '../algebra/expr';
import { tableSlopes } from '../numeric/interpolate';
import { formatShort } from '../numbers';
import { unitText } from '../semantics/units';
import type { LoweredModel } from '../model/model';

const fmt = (v: number): string => formatShort(v);
const close = (x: number, y: number): boolean => Math.abs(x - y) <= 1e-12 * (Math.abs(x) + Math.abs(y)) + 1e-300;
const withUnit = (v: number, u: string): string => (u && u !== '1' ? `${fmt(v)} ${u}` : fmt(v));

/**
 * The one-sided slopes of a switch `a <= b ? p : q` at a tie, along each unknown that moves the switch and
 * changes the slope: "along x: slope 0 below 1.2 m and 0.5 above (in SI units); the linear model takes the
 * one below". Slopes are of the switched expression per the variable, both in SI (so a flow against a flow
 * reads 1 or 2 whatever the declared units). Empty when no variable shows two slopes.
 */
export function switchSlopes(lm: LoweredModel, a: E.Node, b: E.Node, p: E.Node, q: E.Node, values: Float64Array): string {
  const cond = E.sub(a, b); // p holds where cond < 0
  const parts: string[] = [];
  const ids = new Set([...E.slots(p), ...E.slots(q), ...E.slots(cond)]);
  for (const id of ids) {
    const slot = lm.slots[id];
    if (!slot || slot.kind === 'const') continue;
    const gc = E.evaluate(E.derivative(cond, id), values);
    if (!(gc !== 0) || !Number.isFinite(gc)) continue; // the switch does not move along this variable
    const gp = E.evaluate(E.derivative(p, id), values);
    const gq = E.evaluate(E.derivative(q, id), values);
    if (close(gp, gq)) continue;
    // moving the variable up raises cond when gc > 0: from p's side (below) into q's (above)
    const [below, above] = gc > 0 ? [gp, gq] : [gq, gp];
    const unit = unitText(slot.unit.text);
    const at = (values[id] - slot.offset) / slot.scale;
    parts.push(`along ${slot.name}: slope ${fmt(below)} below ${withUnit(at, unit)} and ${fmt(above)} above (in SI units); the linear model takes the one ${gc > 0 ? 'below' : 'above'}`);
    if (parts.length === 3) break;
  }
  return parts.join('; ');
}

export interface TableFinding {
  kind: 'outside' | 'breakpoint';
  /** P520/P521 arguments (outside) or P505's detail and uses (breakpoint). */
  args: Record<string, string>;
}

/** What a table node says at the point: read outside its breakpoints, or on a breakpoint with two slopes. */
export function tableFinding(n: E.Fn, values: Float64Array): TableFinding | undefined {
  if (!n.tab || n.tab.order !== 0) return undefined;
  const src = n.tab.source;
  const t = src.table;
  const q = E.evaluate(n.args[0], values);
  if (!Number.isFinite(q)) return undefined;
  const xu = src.xUnit, yu = src.yUnit;
  const x = (v: number) => withUnit((v - xu.offset) / xu.scale, unitText(xu.text));
  const y = (v: number) => withUnit((v - yu.offset) / yu.scale, unitText(yu.text));
  const last = t.x.length - 1;
  if (q < t.x[0] || q > t.x[last]) {
    return { kind: 'outside', args: { name: src.name, value: x(q), from: x(t.x[0]), to: x(t.x[last]), held: y(q < t.x[0] ? t.y[0] : t.y[last]) } };
  }
  const k = t.x.indexOf(q);
  if (k < 0) return undefined;
  const { left, right } = tableSlopes(t, q);
  if (left === right) return undefined;
  const per = (v: number) => fmt((v * xu.scale) / yu.scale);
  const su = `${unitText(yu.text) || '1'} per ${unitText(xu.text) || 'unit'}`;
  const end = k === 0 ? ' (its first; below it the table holds its end value)' : k === last ? ' (its last; above it the table holds its end value)' : '';
  return {
    kind: 'breakpoint',
    args: {
      detail: `table "${src.name}" is read at its breakpoint ${x(q)}${end}: slope ${per(left)} below and ${per(right)} above (${su})`,
      uses: `takes the mean of the two, ${per((left + right) / 2)} ${su}`,
    },
  };
}
