/**
 * Tolerance bands on constants: `const cv = 0.0045 [m^2.5/s] ± 8 %` or `± 0.0004 [m^2.5/s]` says the real
 * constant lies within the band around the written value. The band is a number, in % of the value or with
 * a unit that converts to the constant's (as a difference: `± 2 [degC]` is 2 K); a band on a constant
 * computed from other constants is refused (the band belongs to those). Each element of a constant family
 * gets the band on its own value.
 */
import type * as A from '../syntax/ast';
import type { BoundModel, ModelSymbol } from './binder';
import { diag, type Diagnostic } from '../diagnostics';
import { dimsEqual, formatDims, isDimensionless, parseUnit } from './units';
import type { UnitFacts } from './unitChecker';

export interface ConstTolerance {
  name: string;
  symbol: ModelSymbol;
  /** Half-width of the band in SI (a difference: no offset). */
  halfWidthSI: number;
  /** The band in % of the value, when written so. */
  percent?: number;
  /** The band's text as written (from "±"), for reports. */
  text: string;
  span: A.ToleranceBand['span'];
}

export interface ToleranceFacts {
  tolerances: ConstTolerance[];
  diagnostics: Diagnostic[];
}

export function checkTolerances(m: BoundModel, u: UnitFacts, text: string): ToleranceFacts {
  const tolerances: ConstTolerance[] = [];
  const diagnostics: Diagnostic[] = [];
  for (const s of m.consts) {
    const decl = s.decl as A.ConstDecl;
    const band = decl.tolerance;
    if (!band) continue;
    const name = s.name;
    const bandText = text.slice(band.span.start, band.span.end);
    if (mentionsName(decl.value)) {
      diagnostics.push(diag('P650', band.span, { name }));
      continue;
    }
    let e = band.value;
    let sign = 1;
    while (e.kind === 'unary') {
      if (e.op === '-') sign = -sign;
      e = e.arg;
    }
    if (e.kind !== 'number') {
      diagnostics.push(diag('P651', band.value.span, { name, detail: 'it is an expression' }));
      continue;
    }
    const v = sign * e.value;
    if (!Number.isFinite(v) || v < 0) {
      diagnostics.push(diag('P653', band.value.span, { name, value: String(v) }));
      continue;
    }
    const value = u.constValues.get(s) ?? NaN;
    const dims = u.constDims.get(s);
    if (band.percent) {
      if (e.unit) {
        diagnostics.push(diag('P651', e.unit.span, { name, detail: 'a percentage takes no unit' }));
        continue;
      }
      // % of the value as written (a temperature in degC: of its degC value)
      const unit = u.units.get(s);
      const declared = unit ? (value - unit.offset) / unit.scale : value;
      const scale = unit ? unit.scale : 1;
      tolerances.push({ name, symbol: s, halfWidthSI: (v / 100) * Math.abs(declared) * scale, percent: v, text: bandText, span: band.span });
      continue;
    }
    let scale = 1;
    let given = 'a number without a unit';
    let givenDims = dims && isDimensionless(dims) ? dims : undefined;
    if (e.unit) {
      const pu = parseUnit(e.unit.text);
      if (typeof pu === 'string') {
        diagnostics.push(diag('P651', e.unit.span, { name, detail: `the unit [${e.unit.text}] is not known (${pu})` }));
        continue;
      }
      scale = pu.scale;
      given = `in [${e.unit.text}]`;
      givenDims = pu.dims;
    }
    if (u.checked && dims && (!givenDims || !dimsEqual(givenDims, dims))) {
      diagnostics.push(diag('P652', e.unit?.span ?? band.value.span, { name, given, declared: formatDims(dims) }));
      continue;
    }
    tolerances.push({ name, symbol: s, halfWidthSI: v * scale, text: bandText, span: band.span });
  }
  return { tolerances, diagnostics };
}

function mentionsName(e: A.Expr): boolean {
  switch (e.kind) {
    case 'name': return true;
    case 'unary': return mentionsName(e.arg);
    case 'binary': return mentionsName(e.left) || mentionsName(e.right);
    case 'call': return e.args.some(mentionsName);
    default: return false;
  }
}
