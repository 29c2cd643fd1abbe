/**
 * `--vary "NAME = FROM to TO steps N [log]"`: a command-line sweep in the words of a declared sweep
 * (docs/sweeps.md). The text is read by the model language's own parser and resolved exactly like a
 * `sweep` block: it is appended to the model as one, and the core's declaredSweeps() gives the range or
 * the problems (P113 syntax, P201 unknown name, P308 units, P602 range), reported here as one line.
 */
import type { Analysis } from '../core/pipeline/analysis';
import { declaredSweeps, type SweepSpec } from '../core/analysis/sweep';
import { nearest } from './options';

/** The old colon range "NAME=A:B:C": its parts are read differently by different tools, so it is refused. */
const COLON_RANGE = /^\s*([A-Za-z_][\w]*)\s*=\s*[^:\s][^:]*:[^:]+:[^:]+$/;

export function varyRequest(a: Analysis, point: string, vary: string): { spec?: SweepSpec; error?: string } {
  const example = '--vary reads "NAME = FROM to TO steps N [log]", e.g. --vary "belt = 0.05 to 3 steps 60" (FROM and TO in the declared unit, or with a unit: 50 [mm/s])';
  const colon = COLON_RANGE.exec(vary);
  if (colon) return { error: `--vary reads "NAME = FROM to TO steps N": write --vary "${colon[1]} = FROM to TO steps N", not "${vary}"` };
  if (/[\r\n]/.test(vary)) return { error: '--vary takes one line' };
  const body = vary.trim().replace(/^vary\s+/, '');
  if (!body) return { error: example };
  // a sweep name that the model does not use
  const taken = new Set([...a.bound.symbols.keys(), ...a.bound.sweeps.map((s) => s.name.name), ...a.pointNames]);
  let name = 'command_line';
  for (let i = 2; taken.has(name); i++) name = `command_line_${i}`;
  const base = a.text.endsWith('\n') ? a.text : a.text + '\n';
  const header = `\nsweep ${name} from ${point}:\n  vary `;
  const text = base + header + body + '\n';
  const start = base.length + header.length;
  // the model with the sweep appended, read through the model's host (tables and part files beside it)
  const b = a.withText(text);
  const mine = (s: number) => s >= base.length;
  const prefix = `Sweep "${name}": `;
  const say = (m: string) => `--vary: ${m.startsWith(prefix) ? m.slice(prefix.length) : m}`;
  const own = b.diagnostics.filter((d) => d.severity === 'error' && mine(d.span.start));
  if (own.length) {
    const d = own.sort((x, y) => x.span.start - y.span.start)[0];
    if (d.code === 'P201') {
      // an unknown name: the nearest name the model declares
      const word = text.slice(d.span.start, d.span.end);
      // a family (of instances) named without an index: one element is varied at a time
      const elements = [...a.bound.symbols.keys()].filter((n) => n.replace(/\[[^\]]*\]/g, '') === word);
      if (elements.length) return { error: `--vary: "${word}" stands for ${elements.length} elements: vary one at a time, e.g. "${elements[0]}"` };
      const near = nearest(word, [...a.bound.symbols.keys()]);
      return { error: `--vary: the model has no name "${word}"${near ? `; did you mean "${near}"?` : ''}` };
    }
    const col = Math.max(0, d.span.start - start);
    const where = col > 0 && col < body.length ? ` (at "${body.slice(col, col + 12)}")` : '';
    return { error: `${say(d.message).replace(/\.$/, '')}${where}. ${example}` };
  }
  const ds = declaredSweeps(b).find((s) => s.block.name.name === name);
  if (!ds) return { error: `--vary: cannot read "${vary}". ${example}` };
  if (ds.diagnostics.length) return { error: say(ds.diagnostics[0].message) };
  if (!ds.spec) return { error: `--vary: cannot read "${vary}". ${example}` };
  const { name: _drop, ...spec } = ds.spec;
  void _drop;
  return { spec };
}
