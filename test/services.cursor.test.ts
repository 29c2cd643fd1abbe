/**
 * The pure editor services (server/src/core/services: hover, definition, references, rename, completion)
 * driven by a table of cases, without the server: each snippet marks the cursor with `$0` and the ranges
 * an answer must point at with ⟦…⟧; the expected answer stands beside it. The expected facts are worked
 * out by hand in the comments (the tank's level at the point from its steady state, its eigenvalue from
 * the derivative of the outflow); a few protocol tests in test/lsp keep the wire honest.
 */
import { describe, expect, it } from 'vitest';
import { analyze } from '../server/src/core/pipeline/analysis';
import { hover } from '../server/src/core/services/hover';
import { definition, references, rename } from '../server/src/core/services/navigation';
import { completions } from '../server/src/core/services/completion';
import { applyEdits } from '../server/src/core/services/edits';
import type { Span } from '../server/src/core/text';

/** The text without markers, the cursor offset ($0) and the marked ranges (⟦…⟧), in order. */
export function markers(marked: string): { text: string; cursor: number; ranges: Span[] } {
  let text = '';
  let cursor = -1;
  const ranges: Span[] = [];
  const open: number[] = [];
  for (let i = 0; i < marked.length; i++) {
    if (marked.startsWith('$0', i)) {
      cursor = text.length;
      i++;
    } else if (marked[i] === '⟦') open.push(text.length);
    else if (marked[i] === '⟧') ranges.push({ start: open.pop()!, end: text.length });
    else text += marked[i];
  }
  if (cursor < 0) throw new Error('no $0 cursor in the snippet');
  return { text, cursor, ranges: ranges.sort((a, b) => a.start - b.start) };
}

// our own draining tank, time in minutes: level at the point (feed/k)² = (1/0.5)² = 4 m; A = −k/(2·area·√h)
// = −0.5/(2·2·2) = −0.0625 1/min
const model = (body: string) => `time [min]
const area = 2 [m^2]
const k = 0.5 [m^2.5/min]
${body}`;

type Case =
  | { name: string; service: 'hover'; snippet: string; contains: string[]; absent?: string[] }
  | { name: string; service: 'definition' | 'references'; snippet: string }
  | { name: string; service: 'rename'; snippet: string; to: string; expect: string }
  | { name: string; service: 'completion'; snippet: string; labels: [string, string][]; absent?: string[] };

const TANK = (cur: (name: string) => string) => model(`input feed [m^3/min]
state level [m]
var out [m^3/min]
output cm [cm] = level
area*level' = feed - out
out = k*sqrt(${cur('level')})
point base:
  feed = 1 [m^3/min]
  level ~ 1 [m]
`);

/** A part with one input, for the instance cases. */
const CHAIN_PART = `part tank:\n  input q [m^3/s]\n  state h [m]\n  var out [m^3/s]\n  2 [m^2]*h' = q - out\n  out = 0.01 [m^2.5/s]*sqrt(h)\n`;

const CASES: Case[] = [
  { name: 'a state: kind, unit and value at the point', service: 'hover',
    snippet: model(`input feed [m^3/min]\nstate level [m]\nvar out [m^3/min]\narea*level' = feed - out\nout = k*sqrt(lev$0el)\npoint base:\n  feed = 1 [m^3/min]\n  level ~ 1 [m]\n`),
    contains: ['**state** `level` [m]', '| base | 4 m | solved |'] },
  { name: 'a point header: its eigenvalue and time constant', service: 'hover',
    snippet: TANK((n) => n).replace('point base', 'point ba$0se'),
    contains: ['-0.0625', '16'] }, // τ = 1/0.0625 = 16 min
  { name: 'a built-in function', service: 'hover',
    snippet: TANK((n) => n).replace('sqrt(', 'sq$0rt('), contains: ['sqrt'] },
  { name: 'a constant: its value and unit', service: 'hover',
    snippet: TANK((n) => n).replace('area*level', 'ar$0ea*level'), contains: ['area', '2', 'm^2'], absent: ['native code'] },
  { name: 'definition of a var used in an equation: its declaration', service: 'definition',
    snippet: model(`input feed [m^3/min]\nstate level [m]\nvar ⟦out⟧ [m^3/min]\narea*level' = feed - o$0ut\nout = k*sqrt(level)\n`) },
  { name: 'definition of a constant', service: 'definition',
    snippet: `const ⟦area⟧ = 2 [m^2]\ninput q [m^3/s]\nstate h [m]\nar$0ea*h' = q - 0.1 [m^2.5/s]*sqrt(h)\n` },
  { name: 'references of a state: declaration, equations, output, point line', service: 'references',
    snippet: model(`input feed [m^3/min]\nstate ⟦level⟧ [m]\nvar out [m^3/min]\noutput cm [cm] = ⟦level⟧\narea*⟦level⟧' = feed - out\nout = k*sqrt(⟦le$0vel⟧)\npoint base:\n  feed = 1 [m^3/min]\n  ⟦level⟧ ~ 1 [m]\n`) },
  { name: 'references of an input', service: 'references',
    snippet: `input ⟦q⟧ [m^3/s]\nstate h [m]\n2 [m^2]*h' = ⟦$0q⟧ - 0.1 [m^2.5/s]*sqrt(h)\npoint p:\n  ⟦q⟧ = 0.1 [m^3/s]\n` },
  { name: 'rename an input everywhere, point lines included', service: 'rename', to: 'inflow',
    snippet: TANK((n) => n).replace('= feed - out', '= fe$0ed - out'),
    expect: TANK((n) => n).replace(/\bfeed\b/g, 'inflow') },
  // a constant in a family's size, range and index is renamed there too (binder references, where: 'index')
  { name: 'rename a family size constant in the brackets as well', service: 'rename', to: 'cells',
    snippet: `const $0n = 3\nconst k = 0.01 [m^2.5/s]\ninput qin [m^3/s]\nstate h[1..n] [m]\n2 [m^2]*h[1]' = qin - k*sqrt(h[1])\neach i in 2..n: 2 [m^2]*h[i]' = k*sqrt(h[i-1]) - k*sqrt(h[i])\noutput last [m] = h[n]\npoint p:\n  qin = 0.01 [m^3/s]\n  h ~ 1 [m]\n`,
    expect: `const cells = 3\nconst k = 0.01 [m^2.5/s]\ninput qin [m^3/s]\nstate h[1..cells] [m]\n2 [m^2]*h[1]' = qin - k*sqrt(h[1])\neach i in 2..cells: 2 [m^2]*h[i]' = k*sqrt(h[i-1]) - k*sqrt(h[i])\noutput last [m] = h[cells]\npoint p:\n  qin = 0.01 [m^3/s]\n  h ~ 1 [m]\n` },
  { name: 'references of a family size constant include its places in brackets', service: 'references',
    snippet: `const ⟦$0n⟧ = 3\nconst k = 0.01 [m^2.5/s]\ninput qin [m^3/s]\nstate h[1..⟦n⟧] [m]\n2 [m^2]*h[1]' = qin - k*sqrt(h[1])\neach i in 2..⟦n⟧: 2 [m^2]*h[i]' = k*sqrt(h[i-1]) - k*sqrt(h[i])\noutput last [m] = h[⟦n⟧]\npoint p:\n  qin = 0.01 [m^3/s]\n  h ~ 1 [m]\n` },
  // an instance of a part and a family: the written name is renamed in every element and qualified name,
  // keeping the brackets and member names (renaming h in h[2] must not replace the whole h[2])
  { name: 'rename an instance of a part from a qualified use', service: 'rename', to: 'tk',
    snippet: `${CHAIN_PART}place tank as cell[1..3]\ncell[1].q = 0.01 [m^3/s]\neach i in 2..3: $0cell[i].q = cell[i-1].out\noutput last [m] = cell[3].h   # cell[3]\npoint p:\n  cell.h ~ 1 [m]\n`,
    expect: `${CHAIN_PART}place tank as tk[1..3]\ntk[1].q = 0.01 [m^3/s]\neach i in 2..3: tk[i].q = tk[i-1].out\noutput last [m] = tk[3].h   # cell[3]\npoint p:\n  tk.h ~ 1 [m]\n` },
  { name: 'rename an instance from its place line', service: 'rename', to: 'first',
    snippet: `${CHAIN_PART}place tank as so$0lo\nsolo.q = 0.01 [m^3/s]\npoint p:\n  solo.h ~ 1 [m]\n`,
    expect: `${CHAIN_PART}place tank as first\nfirst.q = 0.01 [m^3/s]\npoint p:\n  first.h ~ 1 [m]\n` },
  { name: 'references of an instance: the place line and the qualified uses', service: 'references',
    snippet: `${CHAIN_PART}place tank as ⟦cell⟧[1..2]\n⟦cell⟧[1].q = 0.01 [m^3/s]\n⟦ce$0ll⟧[2].q = ⟦cell⟧[1].out\n` },
  { name: 'rename a family from one element keeps the index', service: 'rename', to: 'lev',
    snippet: `const n = 3\ninput qin [m^3/s]\nstate h[1..n] [m]\n2 [m^2]*h[1]' = qin - 0.01 [m^2.5/s]*sqrt(h[1])\neach i in 2..n: 2 [m^2]*$0h[i]' = 0.01 [m^2.5/s]*(sqrt(h[i-1]) - sqrt(h[i]))\npoint p:\n  qin = 0.01 [m^3/s]\n  h ~ 1 [m]\n  h[2] ~ 1 [m]\n`,
    expect: `const n = 3\ninput qin [m^3/s]\nstate lev[1..n] [m]\n2 [m^2]*lev[1]' = qin - 0.01 [m^2.5/s]*sqrt(lev[1])\neach i in 2..n: 2 [m^2]*lev[i]' = 0.01 [m^2.5/s]*(sqrt(lev[i-1]) - sqrt(lev[i]))\npoint p:\n  qin = 0.01 [m^3/s]\n  lev ~ 1 [m]\n  lev[2] ~ 1 [m]\n` },
  { name: 'rename a point', service: 'rename', to: 'nominal',
    snippet: TANK((n) => n).replace('point base', 'point b$0ase'),
    expect: TANK((n) => n).replace('point base', 'point nominal') },
  { name: 'names in an equation: the declared ones with their kind', service: 'completion',
    snippet: model(`input feed [m^3/min]\nstate level [m]\nvar out [m^3/min]\narea*level' = feed - ou$0\n`),
    labels: [['out', 'var'], ['level', 'state'], ['feed', 'input'], ['area', 'const'], ['sqrt', 'function']] },
  { name: 'units inside a bracket', service: 'completion',
    snippet: model(`input feed [m^3/$0\n`), labels: [['m^3/s', 'unit'], ['L/min', 'unit']], absent: ['level'] },
  { name: 'nothing in a comment', service: 'completion',
    snippet: model(`input feed [m^3/min]  # the fe$0\n`), labels: [], absent: ['feed'] },
];

describe('pure services at a cursor (table of cases)', () => {
  for (const c of CASES) {
    it(`${c.service}: ${c.name}`, () => {
      const { text, cursor, ranges } = markers(c.snippet);
      const a = analyze(text);
      switch (c.service) {
        case 'hover': {
          const md = hover(a, cursor)?.markdown ?? '';
          for (const s of c.contains) expect(md).toContain(s);
          for (const s of c.absent ?? []) expect(md).not.toContain(s);
          break;
        }
        case 'definition':
          expect(definition(a, cursor)).toEqual(ranges);
          break;
        case 'references':
          expect([...references(a, cursor)].sort((x, y) => x.start - y.start)).toEqual(ranges);
          break;
        case 'rename': {
          const r = rename(a, cursor, c.to);
          expect(r.ok).toBe(true);
          expect(applyEdits(text, r.ok ? r.edits : [])).toBe(c.expect);
          break;
        }
        case 'completion': {
          const got = completions(a, cursor);
          for (const [label, kind] of c.labels) expect(got.find((x) => x.label === label), label).toMatchObject({ kind });
          for (const label of c.absent ?? []) expect(got.some((x) => x.label === label)).toBe(false);
          if (!c.labels.length) expect(got).toEqual([]);
          break;
        }
      }
    });
  }
});

describe('the marker parser', () => {
  it('finds the cursor and the ranges with offsets in the stripped text', () => {
    expect(markers('ab ⟦cd⟧ e$0f ⟦g⟧')).toEqual({ text: 'ab cd ef g', cursor: 7, ranges: [{ start: 3, end: 5 }, { start: 9, end: 10 }] });
  });
});
