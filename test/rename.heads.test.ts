/**
 * Rename of a family's or an instance's name (server/src/core/services/headNames.ts) and generated linear
 * blocks: the Δ names and `at` names of a block written by Linearize are renamed with the instance, and a
 * block that was up to date stays up to date (its digest recomputed; no P601 afterwards). Independent
 * route: the renamed model's block equals the block Linearize writes afresh for the renamed model.
 */
import { describe, expect, it } from 'vitest';
import { analyze } from '../server/src/core/pipeline/analysis';
import { rename } from '../server/src/core/services/navigation';
import { applyEdits } from '../server/src/core/services/edits';
import { linearizeEdit } from '../server/src/core/services/linearBlock';

const model = `part tank:
  input q [m^3/s]
  state h [m]
  var out [m^3/s]
  2 [m^2]*h' = q - out
  out = 0.01 [m^2.5/s]*sqrt(h)
input feed [m^3/s]
place tank as t[1..2]
t[1].q = feed
t[2].q = t[1].out
point p:
  feed = 0.01 [m^3/s]
  t.h ~ 1 [m]
`;

const withBlock = (text: string) => {
  const e = linearizeEdit(analyze(text), 'p');
  if (!e.ok) throw new Error('not linearized');
  return applyEdits(text, e.edits);
};

describe('rename of an instance with a generated block', () => {
  const text = withBlock(model);
  it('the block names the instances', () => {
    expect(text).toContain("Δt[2].h'");
    expect(analyze(text).allDiagnostics().filter((d) => d.code === 'P601')).toEqual([]);
  });

  it('renaming t renames the block\'s names and keeps it up to date', () => {
    const a = analyze(text);
    const r = rename(a, text.indexOf('t[2].q'), 'tank_')
    expect(r.ok).toBe(true);
    const renamed = applyEdits(text, r.ok ? r.edits : []);
    expect(renamed).not.toMatch(/\bt\[/);
    expect(renamed).toContain("Δtank_[2].h'");
    const b = analyze(renamed);
    expect(b.allDiagnostics().filter((d) => d.severity !== 'info')).toEqual([]);
    // the same block as Linearize writes for the renamed model from scratch
    expect(renamed).toBe(withBlock(model.replace(/\bt\[/g, 'tank_[').replace('t.h ~', 'tank_.h ~')));
  });

  it('a new name the model already has is refused', () => {
    const a = analyze(text);
    const r = rename(a, text.indexOf('t[2].q'), 'feed');
    expect(r).toEqual({ ok: false, message: '"feed" is already a name of the model: choose another name.' });
  });
});
