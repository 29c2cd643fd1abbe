/**
 * Sampled-data models (server/src/core/numeric/discretize.ts): the discrete model of the linear one for a
 * sample time T by zero-order hold, first-order hold and the bilinear (Tustin) map.
 *
 * Outside reference: `scipy.signal.cont2discrete` (methods 'zoh', 'foh', 'bilinear') run on the same A, B,
 * C, D as Poise's linear model of every shared reference model, agreement to 1e-12 relative to the matrix
 * norm. Independent route: the ZOH step (and the ZOH step with a fractional input delay) equals the
 * continuous step at the sample instants, the continuous one integrated by Dormand–Prince at tight
 * tolerance (numeric/ode.ts).
 */
import * as fs from 'fs';
import { beforeAll, describe, expect, it } from 'vitest';
import { linearSystem } from '../server/src/core/analysis/dynamics';
import { sampledModel } from '../server/src/core/analysis/handoff/sampled';
import { discretize, type StateSpace } from '../server/src/core/numeric/discretize';
import { eigenvalues, sortEigen } from '../server/src/core/numeric/eigen';
import { linearEigen } from '../server/src/core/present/format';
import { integrateNonstiff } from '../server/src/core/numeric/ode';
import { solve } from './helpers/model';
import { referenceModels } from './helpers/reference';
import { PYTHON_WITH_SCIPY, runScipy, SCIPY_REQUIRED } from './helpers/scipy';

function stateSpaceOf(file: string): StateSpace {
  const s = solve(fs.readFileSync(file, 'utf8'));
  const sys = linearSystem(s.lin);
  return { n: sys.n, m: sys.m, p: sys.p, A: sys.A, B: sys.B, C: sys.C, D: sys.D };
}

/** A sample time of a fifth of the fastest time scale (1/ρ(A) by the max row sum), so every method is exercised. */
function sampleTime(sys: StateSpace): number {
  let rho = 0;
  for (let i = 0; i < sys.n; i++) {
    let s = 0;
    for (let j = 0; j < sys.n; j++) s += Math.abs(sys.A[i * sys.n + j]);
    rho = Math.max(rho, s);
  }
  return rho > 0 ? 0.2 / rho : 1;
}

function maxRelDiff(a: Float64Array, b: number[][]): number {
  const flat = b.flat();
  let norm = 0, diff = 0;
  for (let k = 0; k < flat.length; k++) {
    norm = Math.max(norm, Math.abs(flat[k]));
    diff = Math.max(diff, Math.abs(a[k] - flat[k]));
  }
  expect(a.length).toBe(flat.length);
  return norm === 0 ? diff : diff / norm;
}

const METHODS = [['zoh', 'zoh'], ['foh', 'foh'], ['tustin', 'bilinear']] as const;

describe('discretization against scipy.signal.cont2discrete', () => {
  if (!PYTHON_WITH_SCIPY && !SCIPY_REQUIRED) {
    it.skip('needs python3 with numpy and scipy (apt-get install -y python3-numpy python3-scipy)', () => {});
    return;
  }
  const cases = referenceModels().map((ref) => {
    const sys = stateSpaceOf(ref.file);
    return { name: ref.name, sys, T: sampleTime(sys) };
  });
  let out: Record<string, number[][][]>[] = [];
  beforeAll(() => {
    // one Python process for every model (starting SciPy is the slow part)
    out = runScipy<Record<string, number[][][]>[]>(
      `res = []
for c in inp:
    n, m, p = c['n'], c['m'], c['p']
    A = np.array(c['A'], dtype=float).reshape(n, n); B = np.array(c['B'], dtype=float).reshape(n, m)
    C = np.array(c['C'], dtype=float).reshape(p, n); D = np.array(c['D'], dtype=float).reshape(p, m)
    r = {}
    for meth in ('zoh', 'foh', 'bilinear'):
        ad, bd, cd, dd, _ = scipy.signal.cont2discrete((A, B, C, D), c['T'], method=meth)
        r[meth] = [ad.tolist(), bd.tolist(), cd.tolist(), dd.tolist()]
    res.append(r)
print(json.dumps(res))`,
      cases.map(({ sys, T }) => ({ n: sys.n, m: sys.m, p: sys.p, A: Array.from(sys.A), B: Array.from(sys.B), C: Array.from(sys.C), D: Array.from(sys.D), T })),
    );
  });
  cases.forEach(({ name, sys, T }, idx) => {
    it(name, () => {
      for (const [ours, theirs] of METHODS) {
        const dsys = discretize(sys, T, ours)!;
        const [ad, bd, cd, dd] = out[idx][theirs];
        expect(maxRelDiff(dsys.A, ad), `${ours} A`).toBeLessThan(1e-12);
        if (sys.m) expect(maxRelDiff(dsys.B, bd), `${ours} B`).toBeLessThan(1e-12);
        if (sys.p) expect(maxRelDiff(dsys.C, cd), `${ours} C`).toBeLessThan(1e-12);
        if (sys.p && sys.m) expect(maxRelDiff(dsys.D, dd), `${ours} D`).toBeLessThan(1e-12);
      }
    });
  });
});

/** x at t for the continuous model with x(0) = 0 and input u(t) = e_j for t ≥ t0 (Dormand–Prince, tight). */
function continuousStep(sys: StateSpace, j: number, t0: number, times: number[]): number[][] {
  const { n, m } = sys;
  const out: number[][] = [];
  const f = (t: number, x: Float64Array, dx: Float64Array): boolean => {
    const u = t >= t0 ? 1 : 0;
    for (let i = 0; i < n; i++) {
      let s = sys.B[i * m + j] * u;
      for (let k = 0; k < n; k++) s += sys.A[i * n + k] * x[k];
      dx[i] = s;
    }
    return true;
  };
  let x = new Float64Array(n);
  let t = 0;
  for (const te of times) {
    // integrate piecewise so that the input switch at t0 is a step boundary
    for (const stop of [Math.min(Math.max(t0, t), te), te]) {
      if (stop <= t) continue;
      if (stop <= t0 && x.every((v) => v === 0)) {
        t = stop; // at rest before the input arrives
        continue;
      }
      const sol = integrateNonstiff({ n, f }, { t0: t, t1: stop, x0: x, rtol: 1e-12, atol: 1e-15 });
      expect(sol.status).toBe('ok');
      x = Float64Array.from(sol.x[sol.x.length - 1]);
      t = stop;
    }
    out.push(Array.from(x));
  }
  return out;
}

describe('the discrete step equals the continuous step at the sample instants (independent route)', () => {
  const drain = referenceModels().find((r) => r.name === 'twotank') ?? referenceModels()[0];
  const sys = stateSpaceOf(drain.file);
  const T = sampleTime(sys) * 3;
  const times = Array.from({ length: 12 }, (_, k) => (k + 1) * T);
  for (const f of [0, 0.35]) {
    it(`zero-order hold, input delay ${f} of a sample`, () => {
      const d = discretize(sys, T, 'zoh', f)!;
      const cont = continuousStep(sys, 0, f * T, times);
      let x = new Float64Array(d.n);
      let scale = 0;
      for (const row of cont) for (const v of row) scale = Math.max(scale, Math.abs(v));
      for (let k = 0; k < times.length; k++) {
        const next = new Float64Array(d.n);
        for (let i = 0; i < d.n; i++) {
          let s = d.B[i * d.m + 0];
          for (let c = 0; c < d.n; c++) s += d.A[i * d.n + c] * x[c];
          next[i] = s;
        }
        x = next;
        for (let i = 0; i < sys.n; i++) expect(Math.abs(x[i] - cont[k][i])).toBeLessThan(1e-8 * scale);
      }
    });
  }
});

describe('discrete poles and the stability test inside the unit circle', () => {
  // z = e^{sT} under a hold, z = (1 + sT/2)/(1 − sT/2) under Tustin (Franklin, Powell & Workman, Digital
  // Control of Dynamic Systems, ch. 4 and 6). Independent route: the eigenvalues of the discrete A itself.
  for (const ref of referenceModels()) {
    it(`${ref.name}: mapped poles equal the eigenvalues of the discrete A`, () => {
      const s = solve(fs.readFileSync(ref.file, 'utf8'));
      const sys = linearSystem(s.lin);
      const T = sampleTime(sys) * 5;
      for (const hold of ['zoh', 'foh', 'tustin'] as const) {
        const sm = sampledModel(sys, T, hold)!;
        const e = eigenvalues({ rows: sm.n, cols: sm.n, data: sm.A });
        const direct = sortEigen(e.re, e.im);
        const mapped = sm.poles.map((p) => p.z);
        for (const z of mapped) {
          const nearest = Math.min(...direct.map((d) => Math.hypot(d.re - z.re, d.im - z.im)));
          expect(nearest, `${hold} pole ${z.re}+${z.im}i`).toBeLessThan(1e-9);
        }
        const contStable = linearEigen(s.lin).every((l) => l.re < -1e-9);
        if (contStable) expect(sm.verdict).toBe('stable');
      }
    });
  }
  it('an unstable and an integrating model', () => {
    const base = { m: 1, p: 1, B: Float64Array.from([1]), C: Float64Array.from([1]), D: new Float64Array(1), states: ['x'], inputs: ['u'], outputs: ['y'], stateUnits: [''], inputUnits: [''], outputUnits: [''], timeUnit: 's', outputsAreStates: false };
    expect(sampledModel({ ...base, n: 1, A: Float64Array.from([0.3]) }, 0.1, 'zoh')!.verdict).toBe('unstable');
    const integ = sampledModel({ ...base, n: 1, A: Float64Array.from([0]) }, 0.1, 'zoh', 0.5)!;
    expect(integ.verdict).toBe('marginal');
    expect(integ.states).toEqual(['x', 'u@prev']);
    expect(integ.poles.map((p) => p.magnitude)).toEqual([1, 0]);
  });
});
