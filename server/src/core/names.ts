/**
 * Tables looked up by a user's name (built-in functions and constants, keywords). A plain object literal
 * inherits Object.prototype, so `"constructor" in table` is true and `table.toString` is a function: a user
 * who names a variable `constructor`, `toString` or `__proto__` would meet JavaScript's internals. These
 * tables have no prototype, and `hasName` asks for own entries only. Symbol tables are `Map`s.
 */
export function nameTable<T, K extends string = string>(entries: Record<K, T>): Readonly<Record<K, T>> {
  const t = Object.create(null) as Record<K, T>;
  for (const k of Object.keys(entries) as K[]) t[k] = entries[k];
  return Object.freeze(t);
}

/** The names of each frozen table, as a set: a memo keyed by immutable objects (a set answers a name read
 * from the text several times faster than a property lookup on a prototype-free object). */
const frozenNames = new WeakMap<object, ReadonlySet<string>>();

/** Whether `name` is an own entry of `table` (never something it inherits). */
export function hasName(table: object, name: string): boolean {
  let names = frozenNames.get(table);
  if (names === undefined) {
    if (!Object.isFrozen(table)) return Object.prototype.hasOwnProperty.call(table, name);
    names = new Set(Object.getOwnPropertyNames(table));
    frozenNames.set(table, names);
  }
  return names.has(name);
}

/** A prototype-free record to fill with entries keyed by users' names (e.g. JSON "values"). */
export function nameRecord<T>(): Record<string, T> {
  return Object.create(null) as Record<string, T>;
}
