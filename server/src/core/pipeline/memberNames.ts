/**
 * An unknown qualified name whose instance exists (`v[i].inflow` where `v[1]` is a vessel without
 * `inflow`) is a misspelt member: P201 ("Unknown name v[1].inflow", once per element an each block makes)
 * becomes P263 at the written name, naming the part and the names it has — said once for the line.
 */
import { diag, type Diagnostic } from '../diagnostics';
import { partNames, type Instance } from '../semantics/elaborate';
import type { Span } from '../text';

export function explainMembers(ds: Diagnostic[], instances: ReadonlyMap<string, Instance>, written: (span: Span) => string): Diagnostic[] {
  if (!instances.size) return ds;
  return ds.map((d) => {
    const name = d.code === 'P201' && d.data && typeof d.data.name === 'string' && !d.data.call ? d.data.name : undefined;
    if (!name || !name.includes('.')) return d;
    // the longest prefix that is an instance: plant.pump.speed → plant.pump, then plant
    for (let k = name.lastIndexOf('.'); k > 0; k = name.lastIndexOf('.', k - 1)) {
      const inst = instances.get(name.slice(0, k));
      if (!inst) continue;
      const member = /^[^.[]+/.exec(name.slice(k + 1))?.[0] ?? '';
      const names = partNames(inst.part.block);
      if (!member || names.has(member)) return d;
      return diag('P263', d.span, { part: inst.part.block.name.name, member, written: written(d.span) || name, names: [...names].join(', ') }, { data: { name, member } });
    }
    return d;
  });
}
