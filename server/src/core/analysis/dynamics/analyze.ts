/** The whole dynamics of a linear model: every method of this folder in order (docs/dynamics.md). */
import type { LinearModel } from '../../solve/linearizer';
import { RANK_TOL, type Dynamics, type LinearSystem } from './types';
import { linearSystem, transpose } from './system';
import { balanceSystem } from './balance';
import { buildModes, spectrum } from './modes';
import { lostDirections, pbhDeficiencies, rankTest } from './pbh';
import { stepHorizon, verdict } from './stability';
import { transferFunctions } from './transfer';
import { dcGains } from './dcGain';

export interface DynamicsOptions {
  /** Relative tolerance of the rank decisions (default 1e-9). */
  rankTolerance?: number;
}

export function analyzeDynamics(linOrSys: LinearModel | LinearSystem, opts: DynamicsOptions = {}): Dynamics {
  const sys = 'outputsAreStates' in linOrSys ? linOrSys : linearSystem(linOrSys);
  const { n } = sys;
  const rtol = opts.rankTolerance ?? RANK_TOL;
  const bal = balanceSystem(sys);
  const sp = spectrum(sys);
  const { modal: raw, rho, axisTol } = sp;

  // PBH tests per distinct eigenvalue
  const ctrlDef = pbhDeficiencies(bal.A, bal.B, n, bal.m, raw, rtol, axisTol);
  const obsDef = pbhDeficiencies(transpose(bal.A, n, n), transpose(bal.C, bal.p, n), n, bal.p, raw, rtol, axisTol);
  const modes = buildModes(sys, sp, ctrlDef, obsDef);

  const stability = verdict(sys, modes, rho, axisTol, raw);
  // the directions lost, from the unbalanced system (in declared units)
  const At = transpose(sys.A, n, n);
  const controllability = rankTest(modes, ctrlDef, n, (md, d) => lostDirections(At, transpose(sys.B, n, sys.m), n, sys.m, { re: md.re, im: md.im }, d, sys.states));
  const observability = rankTest(modes, obsDef, n, (md, d) => lostDirections(sys.A, sys.C, n, sys.p, { re: md.re, im: md.im }, d, sys.states));
  const transfer = transferFunctions(sys, bal, rtol, rho, axisTol);
  const dcGain = dcGains(sys, transfer, modes);
  return { system: sys, eigenvalues: sp.eigenvalues, modes, stability, dcGain, transfer, controllability, observability, horizon: stepHorizon(modes, rho, sys.timeUnit) };
}
