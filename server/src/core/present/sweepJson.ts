/** The sweep as JSON, schema `poise-sweep/2` (docs/sweeps.md). */
import type { SweepResult } from '../analysis/sweep';

/** JSON-safe copy (non-finite numbers become null) with a schema tag. */
export function sweepJson(r: SweepResult): unknown {
  return JSON.parse(JSON.stringify({ schema: 'poise-sweep/2', ...r, diagnostics: r.diagnostics.map((d) => ({ code: d.code, severity: d.severity, message: d.message })) }, (_k, v) => (typeof v === 'number' && !Number.isFinite(v) ? null : v)));
}
