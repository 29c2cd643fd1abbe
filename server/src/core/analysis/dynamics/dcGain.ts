/** Steady-state (DC) gains: −C·A⁻¹·B + D by LU, or per pair when A is singular (integrating pairs and their rates). */
import { luFactor } from '../../numeric/dense';
import { AXIS_TOL, type DcGain, type IntegratingPair, type LinearSystem, type Mode, type TransferFunction } from './types';
import { perUnit } from './system';
import { evaluateFactored } from './transfer';

export function dcGains(sys: LinearSystem, tfs: TransferFunction[], modes: Mode[]): DcGain {
  const { n, m, p } = sys;
  const units: string[][] = [];
  for (let i = 0; i < p; i++) units.push(sys.inputUnits.map((u) => perUnit(sys.outputUnits[i], u)));
  const gain: (number | null)[][] = Array.from({ length: p }, () => new Array<number | null>(m).fill(null));
  const hasIntegrator = modes.some((md) => md.kind === 'integrator');
  if (!hasIntegrator) {
    const lu = n ? luFactor({ rows: n, cols: n, data: sys.A }) : undefined;
    if (!lu || lu.ok) {
      for (let j = 0; j < m; j++) {
        const bj = new Float64Array(n);
        for (let k = 0; k < n; k++) bj[k] = sys.B[k * m + j];
        const x = lu ? lu.solve(bj) : bj;
        for (let i = 0; i < p; i++) {
          let g = sys.D[i * m + j];
          for (let k = 0; k < n; k++) g -= sys.C[i * n + k] * x[k];
          gain[i][j] = g;
        }
      }
      return { gain, units, integrating: [], method: 'solve' };
    }
  }
  const integrating: IntegratingPair[] = [];
  const rho = modes.reduce((a, md) => Math.max(a, Math.hypot(md.re, md.im)), 0);
  for (const tf of tfs) {
    const i = tf.outputIndex;
    const j = tf.inputIndex;
    const zeroPoles = tf.poles.filter((x) => Math.hypot(x.re, x.im) <= AXIS_TOL * rho);
    if (!zeroPoles.length) {
      gain[i][j] = tf.identicallyZero ? 0 : tf.dcGain;
      continue;
    }
    let rate: number | null = null;
    if (zeroPoles.length === 1) {
      const rest = tf.poles.filter((x) => !zeroPoles.includes(x));
      rate = evaluateFactored({ gain: tf.gain, poles: rest, zeros: tf.zeros }, { re: 0, im: 0 }).re;
    }
    integrating.push({
      input: tf.input, output: tf.output, order: zeroPoles.length, rate,
      rateUnit: `${perUnit(sys.outputUnits[i], sys.inputUnits[j])}/${sys.timeUnit}`,
    });
  }
  return { gain, units, integrating, method: 'per-pair' };
}
