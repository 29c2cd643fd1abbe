/** Where a diagnostic is, as the command prints it: in the model file or in a parts file it brings in. */
import type { Analysis } from '../core/pipeline/analysis';
import type { Diagnostic } from '../core/diagnostics';

/** `FILE:LINE:COL: severity CODE: message`, in the file the problem is in (a parts file brought in, or the model). */
export function formatDiagnostic(a: Analysis, file: string, d: Diagnostic): string {
  const w = a.where(d.span);
  const name = w.uri === a.uri ? file : w.uri;
  const related = (d.related ?? []).map((r) => {
    const x = a.where(r.span);
    return `\n  ${x.uri === a.uri ? file : x.uri}:${x.start.line + 1}:${x.start.character + 1}: ${r.message}`;
  });
  return `${name}:${w.start.line + 1}:${w.start.character + 1}: ${d.severity} ${d.code}: ${d.message}${a.documents.list.length > 1 ? related.join('') : ''}`;
}
