/**
 * Numerical edges found against outside references (trial of new plants): each case names the fact it
 * checks and its source.
 */
import { describe, expect, it } from 'vitest';
import { analyzeDynamics, type LinearSystem } from '../server/src/core/analysis/dynamics';
import { analyze } from '../server/src/core/pipeline/analysis';
import { formatLinearText } from '../server/src/core/present/format';
import { exportLinear } from '../server/src/core/present/exports';
import { dedent, solve } from './helpers/model';

let seed = 7;
const rnd = (): number => {
  seed = (seed * 16807) % 2147483647;
  return seed / 2147483647;
};

function diagonalSystem(n: number, reach: number, noise: boolean, couple: boolean): LinearSystem {
  const A = new Float64Array(n * n);
  for (let i = 0; i < n; i++) A[i * n + i] = -Math.pow(10, 6 * rnd() - 3);
  if (noise) for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) if (i !== j && rnd() < 0.5) A[i * n + j] = 1e-17 * (rnd() - 0.5) * Math.abs(A[i * n + i]);
  const B = new Float64Array(n);
  const C = new Float64Array(n);
  for (let i = 0; i < reach; i++) B[i] = Math.pow(10, 6 * rnd() - 3);
  for (let i = reach; i < n; i++) C[i] = Math.pow(10, 6 * rnd() - 3);
  if (noise) for (let i = reach; i < n; i++) B[i] = 1e-17 * (rnd() - 0.5) * B[0];
  if (couple) C[0] = 1; // the output also sees a state the input reaches: a real path
  return {
    n, m: 1, p: 1, A, B, C, D: new Float64Array(1), states: Array.from({ length: n }, (_, i) => `x${i}`), inputs: ['u'], outputs: ['y'],
    stateUnits: Array(n).fill(''), inputUnits: [''], outputUnits: [''], timeUnit: 's', outputsAreStates: false,
  };
}

describe('a pair with no path is identically zero', () => {
  // Independent route: graph reachability. With A diagonal, input j reaches only the states its B column
  // touches, and output i sees only the states its C row touches; disjoint sets mean G_ij(s) ≡ 0
  // (Kalman decomposition; any linear-systems text, e.g. Kailath, Linear Systems, 1980, ch. 2).
  it('disjoint states of a diagonal A, with rounding-level couplings as a linearization leaves them', () => {
    for (let t = 0; t < 400; t++) {
      const n = 2 + Math.floor(rnd() * 5);
      const sys = diagonalSystem(n, 1 + Math.floor(rnd() * (n - 1)), t % 2 === 0, false);
      const tf = analyzeDynamics(sys).transfer[0];
      expect(tf.identicallyZero, `case ${t}: ${tf.num} / ${tf.den}`).toBe(true);
      expect(tf.order).toBe(0);
    }
  });
  it('a real path is never taken for none', () => {
    for (let t = 0; t < 200; t++) {
      const n = 2 + Math.floor(rnd() * 5);
      const sys = diagonalSystem(n, 1 + Math.floor(rnd() * (n - 1)), t % 2 === 0, true);
      expect(analyzeDynamics(sys).transfer[0].identicallyZero).toBe(false);
    }
  });
});

describe('nondimensional time is labelled as time units, never seconds', () => {
  // docs/language.md: a file without units has dimensionless time (common practice in nondimensional models).
  const model = dedent(`
    input u
    state x
    x' = u - 2*x
    point p:
      u = 1
  `);
  it('text, JSON, CSV, Markdown and the report say "time unit"', () => {
    const s = solve(model);
    expect(s.lin.timeUnit).toBe('time unit');
    const a = analyze(model);
    const text = formatLinearText(a, s.lin, a.values(s.sol), a.deviationEquations('p')!, 5);
    expect(text).toMatch(/1\/time unit/);
    for (const f of ['json', 'csv', 'markdown', 'numpy', 'latex'] as const) {
      const out = exportLinear(a, 'p', f);
      expect(out, f).toMatch(/time unit/);
      expect(out, f).not.toMatch(/1\/s\b|\[s\]|"s"|time in s\b/);
    }
  });
  it('a model with units keeps its time unit', () => {
    const s = solve(dedent(`
      time [min]
      input u [m]
      state x [m]
      x' = (u - x)/(2 [min])
      point p:
        u = 1 [m]
    `));
    expect(s.lin.timeUnit).toBe('min');
  });
});

describe('a kink is reported only where the linear model really has two slopes', () => {
  // d(w·|w|)/dw = 2|w| is continuous at 0 (one slope), while d|w|/dw jumps from −1 to +1 (common
  // practice: quadratic drag k·w·|w| is smooth at rest; a Coulomb-like |w| term is not).
  const base = (term: string) => dedent(`
    const k = 2 [N*s^2/m^2]
    const c = 0.3 [N*s/m]
    const m = 1 [kg]
    input f [N]
    state w [m/s]
    m*w' = f - ${term} - c*w
    point rest:
      w = 0 [m/s]
      f ~ 1 [N]
  `);
  const kinks = (term: string) => {
    const a = analyze(base(term));
    return a.point('rest')!.diagnostics.filter((d) => d.code === 'P505').length;
  };
  it('w*abs(w) at w = 0: no warning', () => expect(kinks('k*w*abs(w)')).toBe(0));
  it('abs(w)^3 and w*sign(w)*w at w = 0: no warning', () => {
    expect(kinks('k*abs(w)^3*(1 [s/m])')).toBe(0);
    expect(kinks('k*w*w*sign(w)')).toBe(0);
  });
  it('abs(w) at w = 0: the warning stays', () => expect(kinks('k*abs(w)*(1 [m/s])')).toBe(1));
  it('max(w, 0) at w = 0: the warning stays; max(w, 0)^2: none', () => {
    expect(kinks('k*max(w, 0 [m/s])*(1 [m/s])')).toBe(1);
    expect(kinks('k*max(w, 0 [m/s])^2')).toBe(0);
  });
});

describe('zeros at the origin are exact, with their multiplicity', () => {
  // Quarter-car model: road height → suspension travel is −(kt/mu)·s²/Δ(s)/(ms·mu)… with a double zero at
  // s = 0 (a constant road height, and a constant road slope, leave no steady travel), derived by hand from
  // the two force balances (any vehicle-dynamics text, e.g. Gillespie, Fundamentals of Vehicle Dynamics,
  // 1992, ride chapter). Invented demo numbers.
  const [ms, mu, ks, cs, kt] = [320, 45, 21000, 1500, 190000];
  const model = dedent(`
    const ms = ${ms} [kg]
    const mu = ${mu} [kg]
    const ks = ${ks} [N/m]
    const cs = ${cs} [N*s/m]
    const kt = ${kt} [N/m]
    input zr [m]
    state zs [m]
    state zu [m]
    output travel [m] = zs - zu
    ms*zs'' = -ks*(zs - zu) - cs*(zs' - zu')
    mu*zu'' = ks*(zs - zu) + cs*(zs' - zu') - kt*(zu - zr)
    point level:
      zr = 0 [m]
  `);
  it('road → travel: exactly two zeros at 0, gain −kt/mu, poles the roots of Δ(s)', async () => {
    const { analyzeDynamics, linearSystem, frequencyGrid } = await import('../server/src/core/analysis/dynamics');
    const s = solve(model);
    const d = analyzeDynamics(linearSystem(s.lin));
    const tf = d.transfer.find((t) => t.output === 'travel')!;
    expect(tf.zeros).toEqual([{ re: 0, im: 0 }, { re: 0, im: 0 }]);
    expect(Math.abs(tf.gain - -kt / mu)).toBeLessThan(1e-9 * (kt / mu));
    // Δ(s)/(ms·mu) = s⁴ + a3 s³ + a2 s² + a1 s + a0 from (mu s² + cs s + ks + kt)(ms s² + cs s + ks) − (cs s + ks)²
    const a3 = (cs * (ms + mu)) / (ms * mu);
    const a2 = (ms * (ks + kt) + mu * ks + cs * cs - cs * cs) / (ms * mu);
    const a1 = (cs * (ks + kt) + cs * ks - 2 * cs * ks) / (ms * mu);
    const a0 = ((ks + kt) * ks - ks * ks) / (ms * mu);
    const expected = [1, a3, a2, a1, a0];
    tf.den.forEach((c, k) => expect(Math.abs(c - expected[k])).toBeLessThan(1e-9 * Math.abs(expected[k])));
    // the frequency grid starts near the slowest pole, not at 1e-9
    expect(frequencyGrid(d)[0]).toBeGreaterThan(1e-3);
  });
  it('a genuine small zero is kept (not snapped): (s + 1e-5)/((s + 1)(s + 2))', async () => {
    const { analyzeDynamics } = await import('../server/src/core/analysis/dynamics');
    // controllable canonical form of (s + 1e-5)/(s² + 3 s + 2)
    const sys: LinearSystem = {
      n: 2, m: 1, p: 1, A: Float64Array.from([0, 1, -2, -3]), B: Float64Array.from([0, 1]), C: Float64Array.from([1e-5, 1]), D: new Float64Array(1),
      states: ['x1', 'x2'], inputs: ['u'], outputs: ['y'], stateUnits: ['', ''], inputUnits: [''], outputUnits: [''], timeUnit: 's', outputsAreStates: false,
    };
    const tf = analyzeDynamics(sys).transfer[0];
    expect(tf.zeros.length).toBe(1);
    expect(Math.abs(tf.zeros[0].re + 1e-5)).toBeLessThan(1e-12);
  });
});
