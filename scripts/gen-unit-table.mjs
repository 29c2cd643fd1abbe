// Writes server/src/core/semantics/unitTable.generated.ts from mathjs's own unit definitions, so that
// server/src/core/semantics/units.ts can read unit text without creating mathjs at start-up.
//   node scripts/gen-unit-table.mjs           (re)writes the table
//   node scripts/gen-unit-table.mjs --check   exits 1 when the table differs from what mathjs gives now
// test/units.table.test.ts regenerates the text in memory (unitTableSource) and compares it to the file,
// so a mathjs upgrade cannot leave the table stale.
import { create, unitDependencies, version } from 'mathjs';
import { readFileSync, writeFileSync } from 'node:fs';
import { dirname, resolve } from 'node:path';
import { fileURLToPath, pathToFileURL } from 'node:url';

export const TABLE_PATH = resolve(dirname(fileURLToPath(import.meta.url)), '../server/src/core/semantics/unitTable.generated.ts');

const q = (s) => `'${s}'`;
/** Shortest text that reads back as the same double (NaN for values mathjs's arithmetic turns into NaN). */
const num = (x) => (Number.isNaN(x) ? 'NaN' : String(x));
const NAME = /^[a-zA-Z][a-zA-Z0-9]*$/;

/** The text of unitTable.generated.ts, from the same unit-only mathjs instance units.ts creates. */
export function unitTableSource() {
  const math = create({ unitDependencies });
  const { UNITS, PREFIXES, BASE_DIMENSIONS } = math.Unit;

  const setName = new Map(Object.entries(PREFIXES).map(([k, v]) => [v, k]));
  const prefixLines = Object.entries(PREFIXES).map(([set, prefixes]) => {
    const entries = Object.entries(prefixes).map(([p, { value }]) => {
      if (typeof value !== 'number') throw new Error(`prefix ${set}.${p}: value is not a number`);
      if (p !== '' && !NAME.test(p)) throw new Error(`prefix ${set}.${p}: unexpected characters`);
      return `${q(p)}: ${num(value)}`;
    });
    return `  ${set}: { ${entries.join(', ')} },`;
  });

  const dims = new Map(); // quantity (mathjs base key) -> dimension vector text
  const unitLines = [];
  for (const name of Object.keys(UNITS)) {
    const u = UNITS[name];
    if (!NAME.test(name)) throw new Error(`unit ${name}: unexpected characters`);
    const set = setName.get(u.prefixes);
    if (set === undefined) throw new Error(`unit ${name}: its prefixes are not one of mathjs's prefix sets`);
    const d = `[${u.dimensions.map(num).join(', ')}]`;
    const key = u.base.key;
    if (dims.has(key) && dims.get(key) !== d) throw new Error(`unit ${name}: dimensions differ from other ${key} units`);
    dims.set(key, d);
    // Fractions (degF, degR...) and the Complex of VAR are stored as the number mathjs's `*` makes of them
    // (units.ts multiplies unit.value by prefix.value), so both paths compute with the same double.
    const value = Number(u.value);
    if (typeof u.offset !== 'number') throw new Error(`unit ${name}: offset is not a number`);
    unitLines.push(`  [${q(name)}, ${q(set)}, ${q(key)}, ${num(value)}, ${num(u.offset)}],`);
  }
  const dimLines = [...dims].map(([k, d]) => `  ${k}: ${d},`);

  return [
    `// Generated from mathjs ${version} by scripts/gen-unit-table.mjs: do not edit; run node scripts/gen-unit-table.mjs`,
    '',
    "/** mathjs's base dimensions, the order of every dimension vector below. */",
    `export const UNIT_BASE_DIMENSIONS: readonly string[] = [${BASE_DIMENSIONS.map(q).join(', ')}];`,
    '',
    '/** Prefix sets: prefix → factor. */',
    'export const UNIT_PREFIX_SETS: Readonly<Record<string, Readonly<Record<string, number>>>> = {',
    ...prefixLines,
    '};',
    '',
    '/** Dimension vector of each quantity. */',
    'export const UNIT_DIMENSIONS: Readonly<Record<string, readonly number[]>> = {',
    ...dimLines,
    '};',
    '',
    '/**',
    ' * [name, prefix set, quantity, value, offset] of every unit name and alias, in the order mathjs tries',
    ' * them when it splits a name into prefix + unit. 1 name = (1 + offset)·value in SI units.',
    ' */',
    'export const UNIT_TABLE: readonly (readonly [string, string, string, number, number])[] = [',
    ...unitLines,
    '];',
    '',
  ].join('\n');
}

if (process.argv[1] && import.meta.url === pathToFileURL(resolve(process.argv[1])).href) {
  const text = unitTableSource();
  if (process.argv.includes('--check')) {
    let old = '';
    try {
      old = readFileSync(TABLE_PATH, 'utf8');
    } catch {
      // missing counts as stale
    }
    if (old !== text) {
      console.error(`gen-unit-table: ${TABLE_PATH} is stale; run node scripts/gen-unit-table.mjs`);
      process.exit(1);
    }
    console.log('gen-unit-table: up to date');
  } else {
    writeFileSync(TABLE_PATH, text);
    console.log(`gen-unit-table: wrote ${TABLE_PATH} (${text.split('\n').length} lines, mathjs ${version})`);
  }
}
