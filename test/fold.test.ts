/**
 * Folds located by the extended system (server/src/core/analysis/fold.ts): the steady-state equations
 * plus J·v = 0 and a normalisation, Newton on both. Checked
 *  - against closed forms (x' = u − x²: saddle-node at u = 0, Strogatz, Nonlinear Dynamics and Chaos,
 *    ch. 3; x' = u + x − x³: fold at u = 2/(3√3), Strogatz ch. 3),
 *  - against an mpmath computation at 40 digits for our own exothermic stirred-tank reactor (the commands
 *    are in the comments),
 *  - and by an independent route: the residuals of the model written again here in plain JavaScript at
 *    the reported fold (a steady state exists there) and the determinant of their Jacobian (zero there).
 */
import { describe, expect, it } from 'vitest';
import { analyze } from '../server/src/core/pipeline/analysis';
import { runSweep } from '../server/src/core/analysis/sweep';
import { dedent, expectClose } from './helpers/model';

describe('saddle-node normal forms', () => {
  it("x' = u − x²: the fold at u = 0 to 1e-10, from between grid values", () => {
    const a = analyze('input u\nstate x\nx\' = u - x^2\npoint p:\n  u = 1\n  x ~ 1\n');
    const r = runSweep(a, { point: 'p', vary: 'u', from: 1, to: -1, steps: 7 });
    expect(r.stop?.kind).toBe('fold');
    // saddle-node at u = 0, x = 0 (Strogatz ch. 3)
    expect(Math.abs(r.stop!.at)).toBeLessThanOrEqual(1e-10);
    const x = r.stop!.values![r.columns.findIndex((c) => c.name === 'x')];
    expect(Math.abs(x)).toBeLessThanOrEqual(1e-5); // x* = √u*: 1e-10 in u allows 1e-5 in x
    // independent: the residual u − x² at the reported fold vanishes (a steady state exists there)
    expect(Math.abs(r.stop!.at - x * x)).toBeLessThanOrEqual(1e-15);
    expect(r.stop!.message).toMatch(/fold at u = /);
  });

  it("x' = u + x − x³: the lower branch's fold at u = 2/(3√3), x = −1/√3", () => {
    const a = analyze('input u\nstate x\nx\' = u + x - x^3\npoint p:\n  u = -1\n  x ~ -1.3\n');
    const r = runSweep(a, { point: 'p', vary: 'u', from: -1, to: 1, steps: 10 });
    expect(r.stop?.kind).toBe('fold');
    // d(x³ − x)/dx = 0 at x = −1/√3, where u = x³ − x = 2/(3√3) (Strogatz ch. 3)
    expectClose(r.stop!.at, 2 / (3 * Math.sqrt(3)), 1e-10, 0, 'fold');
    const x = r.stop!.values![0];
    expectClose(x, -1 / Math.sqrt(3), 1e-7, 0, 'x at the fold');
    // independent: residual and slope at the reported fold
    expect(Math.abs(r.stop!.at + x - x ** 3)).toBeLessThanOrEqual(1e-15);
    expect(Math.abs(1 - 3 * x * x)).toBeLessThanOrEqual(1e-7);
  });
});

describe('ignition of an exothermic stirred-tank reactor', () => {
  // Our own reactor: first-order reaction r = k0·exp(−EoR/T)·c, residence time V/q = 250 s, adiabatic rise
  // −dH·cf/rcp = 120 K, cooling UA/(rcp·V) = 0.002 1/s to Tc = 300 K. Balances (common practice):
  //   V·c' = q·(cf − c) − V·r,   rcp·V·T' = rcp·q·(Tf − T) − dH·V·r − UA·(T − Tc)
  // Steady states: c = cf/(1 + τk), and Tf(T) = T − τ·(J·cf·k/(1 + τk) − β·(T − Tc)) (J = −dH/rcp,
  // β = UA/(rcp·V)); the lower (cold) branch ends where dTf/dT = 0 (ignition).
  const text = dedent(`
    const V = 0.5 [m^3]
    const q = 0.002 [m^3/s]
    const cf = 1000 [mol/m^3]
    const k0 = 4e10 [1/s]
    const EoR = 10000 [K]
    const rcp = 4.0e6 [J/(m^3*K)]
    const dH = -4.8e5 [J/mol]
    const UA = 4000 [W/K]
    const Tc = 300 [K]
    input Tf [K]
    state c [mol/m^3]
    state T [K]
    var r [mol/(m^3*s)]
    r = k0*exp(-EoR/T)*c
    V*c' = q*(cf - c) - V*r
    rcp*V*T' = rcp*q*(Tf - T) - dH*V*r - UA*(T - Tc)
    point cold:
      Tf = 290 [K]
      T ~ 295 [K]
      c ~ 950 [mol/m^3]
  `);
  // mpmath (mp.dps = 40), τ = 250, k(T) = 4e10·exp(−10000/T), J·cf = 120, β = 0.002:
  //   T* = findroot(lambda T: 1 - tau*(J*cf*k(T)*EoR/T**2/(1+tau*k(T))**2 - beta), 315.4)
  //      = 315.4219851157419500030101476541018673844 K
  //   Tf* = Tf(T*) = 305.6672166288546650238633844839068441029 K, c* = 854.4519912936811668279013583562836918862
  //   (the same from findroot on (F1, F2, det J) = 0 in (c, T, Tf))
  const TfStar = 305.6672166288546650238633844839068441029;
  const TStar = 315.4219851157419500030101476541018673844;
  const cStar = 854.4519912936811668279013583562836918862;

  it('the extinction fold of the hot branch at Tf = 279.419 K, sweeping down', () => {
    // mpmath as above from the guess 351: T* = 351.0594510350033797763799339029116336634 K,
    // Tf* = 279.4188831301760341997663866667946377305 K
    const hot = text.replace('T ~ 295 [K]', 'T ~ 390 [K]').replace('c ~ 950 [mol/m^3]', 'c ~ 100 [mol/m^3]').replace('Tf = 290 [K]', 'Tf = 300 [K]');
    const res = runSweep(analyze(hot), { point: 'cold', vary: 'Tf', from: 300, to: 260, steps: 16 });
    expect(res.stop?.kind).toBe('fold');
    expect(Math.abs(res.stop!.at - 279.4188831301760341997663866667946377305)).toBeLessThanOrEqual(1e-10 * 279.42);
    expectClose(res.stop!.values![res.columns.findIndex((x) => x.name === 'T')], 351.0594510350033797763799339029116336634, 1e-7, 0, 'T');
    expect(res.points.every((p) => p.value >= 279.4188831301760341997663866667946377305)).toBe(true);
  });

  for (const [steps, label] of [[40, 'on a grid of 1 K'], [7, 'between coarse grid values']] as const) {
    it(`the ignition fold at Tf = 305.667 K to 1e-10, ${label}`, () => {
      const a = analyze(text);
      const res = runSweep(a, { point: 'cold', vary: 'Tf', from: 290, to: 330, steps });
      expect(res.stop?.kind).toBe('fold');
      expect(Math.abs(res.stop!.at - TfStar)).toBeLessThanOrEqual(1e-10 * TfStar);
      const col = (n: string) => res.stop!.values![res.columns.findIndex((x) => x.name === n)];
      // T and c at a quadratic fold: √(1e-16) relative precision at best
      expectClose(col('T'), TStar, 1e-7, 0, 'T at the fold');
      expectClose(col('c'), cStar, 1e-7, 0, 'c at the fold');
      // independent: the balances written here in JavaScript vanish at the reported state and Tf (a steady
      // state exists there) and their Jacobian in (c, T) is singular
      const Tf = res.stop!.at;
      const T = col('T');
      const c = col('c');
      const k = 4e10 * Math.exp(-10000 / T);
      const f1 = (1000 - c) / 250 - k * c;
      const f2 = (Tf - T) / 250 + 0.12 * k * c - 0.002 * (T - 300);
      expect(Math.abs(f1) / (1000 / 250)).toBeLessThanOrEqual(1e-13);
      expect(Math.abs(f2) / (T / 250)).toBeLessThanOrEqual(1e-13);
      const a11 = -1 / 250 - k;
      const a12 = (-k * 10000 * c) / (T * T);
      const a21 = 0.12 * k;
      const a22 = -1 / 250 + (0.12 * k * 10000 * c) / (T * T) - 0.002;
      expect(Math.abs(a11 * a22 - a12 * a21) / Math.abs(a11 * a22)).toBeLessThanOrEqual(1e-6);
      // every recorded point is on the cold branch, before the fold
      expect(res.points.every((p) => p.value <= TfStar)).toBe(true);
    });
  }
});
