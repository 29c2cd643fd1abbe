// A light, line-based scan of a model's text to offer choices in the Sweep dialog (which name to vary and a
// sensible range). It is only a convenience for the user interface: the language server does the real
// parsing and reports any error when the sweep runs. Pure: no `vscode` import.

export type DeclarationKind = 'const' | 'input' | 'state' | 'var' | 'output';

export interface Declared {
  name: string;
  kind: DeclarationKind;
  /** unit text inside the brackets, or '' when the declaration has none (dimensionless) */
  unit: string;
  /** the numeric value given in the declaration (constants), or in the point block when given there */
  value?: number;
}

const NAME = String.raw`[\p{L}_][\p{L}\p{N}_]*`;
const DECLARATION = new RegExp(
  String.raw`^(const|input|state|var|output)\s+(${NAME}(?:\s*,\s*${NAME})*)\s*(?:\[([^\]]*)\])?\s*(?:=\s*([^#]*))?`,
  'u',
);
const ASSIGNMENT = new RegExp(String.raw`^\s+(${NAME})\s*[=~]\s*([-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?)`, 'u');
const NUMBER_ONLY = /^\s*([-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?)\s*(?:\[([^\]]*)\])?\s*$/;

function stripComment(line: string): string {
  const i = line.indexOf('#');
  return i < 0 ? line : line.slice(0, i);
}

/** The declared names in document order, with the values fixed or guessed in `point` when given. */
export function scanDeclarations(text: string, point?: string): Declared[] {
  const out: Declared[] = [];
  const byName = new Map<string, Declared>();
  const lines = text.split(/\r?\n/);
  let inPoint = false;
  for (const raw of lines) {
    const line = stripComment(raw);
    if (/^\S/.test(line)) {
      inPoint = point !== undefined && new RegExp(String.raw`^point\s+${escapeRegExp(point)}\s*:`, 'u').test(line);
      const m = DECLARATION.exec(line);
      if (m) {
        const kind = m[1] as DeclarationKind;
        const value = m[4] !== undefined ? NUMBER_ONLY.exec(m[4]) : null;
        for (const name of m[2].split(',').map((s) => s.trim())) {
          // a constant's unit is the one of its value: `const area = 1.2 [m^2]`
          const d: Declared = { name, kind, unit: (m[3] ?? value?.[2] ?? '').trim() };
          if (kind === 'const' && value) d.value = Number(value[1]);
          if (!byName.has(name)) {
            byName.set(name, d);
            out.push(d);
          }
        }
      }
    } else if (inPoint) {
      const m = ASSIGNMENT.exec(line);
      const d = m ? byName.get(m[1]) : undefined;
      if (m && d) d.value = Number(m[2]);
    }
  }
  return out;
}

function escapeRegExp(s: string): string {
  return s.replace(/[.*+?^${}()|[\]\\]/g, '\\$&');
}

/** A default sweep range around a value: half to twice it (negative values likewise), or 0 to 1 when 0. */
export function defaultRange(value: number | undefined): { from: number; to: number } {
  if (value === undefined || !Number.isFinite(value) || value === 0) return { from: 0, to: 1 };
  const a = value / 2;
  const b = value * 2;
  return { from: Math.min(a, b), to: Math.max(a, b) };
}
