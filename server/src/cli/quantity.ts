/**
 * Numbers with a unit on the command line ("0.5[L/s]", "50 [mm/s]", "12"), converted to the declared
 * unit of a model name. Shell code: the unit arithmetic itself is the core's (semantics/units.ts).
 */
import type { Analysis } from '../core/pipeline/analysis';
import type { Slot } from '../core/model/model';
import { dimsEqual, parseUnit } from '../core/semantics/units';

/** Parses "12", "-3.5e-2", "50 [mm/s]" or "50[mm/s]": a number and an optional bracketed unit. */
export function parseQuantity(text: string): { value: number; unit?: string } | undefined {
  const m = /^\s*([-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?)\s*(?:\[([^\]]*)\])?\s*$/.exec(text);
  if (!m) return undefined;
  return { value: Number(m[1]), unit: m[2] };
}

/** The slot of a declared name (its value, not a derivative). */
export function slotOfName(a: Analysis, name: string): Slot | undefined {
  const s = a.bound.symbols.get(name);
  if (!s) return undefined;
  const id = a.lowered.slotOf(s, 0);
  return id >= 0 ? a.lowered.slots[id] : undefined;
}

/**
 * A size (a difference, so a unit offset such as that of degC does not apply) in the declared unit of
 * `name`: a bare number is already in that unit. Returns the number or a one-line message.
 */
export function sizeInDeclaredUnit(a: Analysis, name: string, text: string): number | string {
  const q = parseQuantity(text);
  if (!q) return `"${text.trim()}" is not a number (optionally with a unit in brackets, e.g. 0.5[L/s])`;
  if (q.unit === undefined) return q.value;
  const slot = slotOfName(a, name);
  if (!slot) return `"${name}" has no value to step`;
  const u = parseUnit(q.unit);
  if (typeof u === 'string') return `unknown unit "${q.unit}": ${u}`;
  const declared = slot.unit.text === '1' ? 'no unit (dimensionless)' : `[${slot.unit.text}]`;
  if (!dimsEqual(u.dims, slot.unit.dims)) return `[${q.unit}] does not convert to the unit of ${name}, ${declared}`;
  return (q.value * u.scale) / slot.scale;
}
