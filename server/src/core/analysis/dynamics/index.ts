/**
 * Dynamics of a linear model at an operating point, as plain data: eigenvalues and modes (time
 * constants, natural frequencies, damping, integrators, participation factors), the stability verdict,
 * the steady-state (DC) gain, the transfer function of every input → output pair with its poles and
 * transmission zeros, controllability and observability (PBH test with SVD ranks), and the frequency
 * response evaluated by complex linear solves. Pure: no I/O. The methods are described in docs/dynamics.md.
 *
 * One file per method: types.ts (the data), system.ts, modes.ts (modes and participation), stability.ts
 * (verdict, step horizon), balance.ts, pbh.ts (controllability/observability), transfer.ts (transfer
 * functions and zeros), dcGain.ts, frequency.ts (frequency response), analyze.ts (all of them in order).
 */
export * from './types';
export { linearSystem, perUnit } from './system';
export { eigenFigures, spectrum, stabilityOf, type Spectrum } from './modes';
export { evaluateFactored, evaluateTransfer, polyEval, polyFromRoots } from './transfer';
export { frequencyGrid, frequencyResponse, type FrequencyPair, type FrequencyResponse } from './frequency';
export { analyzeDynamics, type DynamicsOptions } from './analyze';
