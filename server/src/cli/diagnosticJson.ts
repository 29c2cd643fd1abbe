/** A diagnostic as machine-readable JSON for `--format json` (1-based lines and columns, end exclusive). */
import type { Analysis } from '../core/pipeline/analysis';
import type { Diagnostic } from '../core/diagnostics';

export interface DiagnosticJson {
  file: string;
  line: number;
  column: number;
  end: { line: number; column: number };
  code: string;
  severity: string;
  message: string;
}

export function diagnosticJson(a: Analysis, file: string, d: Diagnostic): DiagnosticJson {
  const w = a.where(d.span);
  const s = w.start;
  const e = w.end;
  return { file: w.uri === a.uri ? file : w.uri, line: s.line + 1, column: s.character + 1, end: { line: e.line + 1, column: e.character + 1 }, code: d.code, severity: d.severity, message: d.message };
}
