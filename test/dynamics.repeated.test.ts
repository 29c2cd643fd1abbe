/**
 * Repeated eigenvalues and the directions a rank test loses (server/src/core/analysis/dynamics/modes.ts,
 * pbh.ts; text in present/format.ts, reportText.ts; hover in services/hover.ts).
 *
 * Our own twin tanks: two identical tanks fed in parallel from one header (half the feed each) with
 * Torricelli outflow. Analytic (common practice): A = diag(−a, −a) with a = k/(2·area·√h), h = (feed/2k)²,
 * so λ = −a is a double eigenvalue with two eigenvectors; B = (b, b), so the input never moves h1 − h2:
 * the uncontrollable direction is (h1 − h2)/√2, and an output of the total volume never sees it either.
 * Tanks in series (the second fed by the first) give the defective case: a double eigenvalue with one
 * eigenvector (a Jordan chain, common practice for identical first-order lags in series).
 * Independent routes: wᵀA = λwᵀ and wᵀB = 0 recomputed here from the linear model, and the nonlinear step
 * response keeps h1 − h2 at zero.
 */
import { describe, expect, it } from 'vitest';
import { analyze } from '../server/src/core/pipeline/analysis';
import { analyzeDynamics } from '../server/src/core/analysis/dynamics';
import { buildReport } from '../server/src/core/analysis/report';
import { formatReportText } from '../server/src/core/present/reportText';
import { formatLinearText } from '../server/src/core/present/format';
import { createSimulator } from '../server/src/core/analysis/simulate';
import { hover } from '../server/src/core/services/hover';
import { dedent } from './helpers/model';

const twin = dedent(`
  const area = 1.5 [m^2]
  const k = 0.02 [m^2.5/s]
  input feed [m^3/s]
  state h1 [m]
  state h2 [m]
  output total [m^3] = area*(h1 + h2)
  area*h1' = feed/2 - k*sqrt(h1)
  area*h2' = feed/2 - k*sqrt(h2)
  point p:
    feed = 0.02 [m^3/s]
    h1 ~ 0.3 [m]
    h2 ~ 0.3 [m]
`);
// h = (0.01/0.02)² = 0.25 m; a = 0.02/(2·1.5·0.5) = 1/75 per s
const lam = -1 / 75;

describe('twin tanks fed in parallel', () => {
  const a = analyze(twin);
  const lin = a.linear('p')!;
  const dyn = analyzeDynamics(lin);

  it('one mode: λ = −1/75 s⁻¹ with algebraic multiplicity 2 and two eigenvectors', () => {
    expect(dyn.modes).toHaveLength(1);
    const md = dyn.modes[0];
    expect(md.re).toBeCloseTo(lam, 14);
    expect(md.algebraicMultiplicity).toBe(2);
    expect(md.geometricMultiplicity).toBe(2);
    expect(md.multiplicity).toBe(2);
    // both tanks take part equally (not "lives in one tank")
    expect(md.participation.map((x) => x.factor)).toEqual([expect.closeTo(0.5, 9), expect.closeTo(0.5, 9)]);
    expect(dyn.eigenvalues).toHaveLength(2); // the spectrum still lists every eigenvalue
  });

  it('the uncontrollable and unobservable direction is 0.707·h1 − 0.707·h2 (the PBH null vector)', () => {
    expect(dyn.controllability.rank).toBe(1);
    expect(dyn.observability.rank).toBe(1);
    for (const test of [dyn.controllability, dyn.observability]) {
      expect(test.failing).toHaveLength(1);
      const [dir] = test.failing[0].directions;
      expect(dir.map((t) => t.state)).toEqual(['h1', 'h2']);
      expect(dir[0].weight).toBeCloseTo(Math.SQRT1_2, 12);
      expect(dir[1].weight).toBeCloseTo(-Math.SQRT1_2, 12);
    }
    // independent route: wᵀA = λwᵀ and wᵀB = 0 from the linear model's own matrices
    const w = dyn.controllability.failing[0].directions[0].map((t) => t.weight);
    const { A, B, n } = lin;
    for (let j = 0; j < n; j++) {
      let s = 0;
      for (let i = 0; i < n; i++) s += w[i] * A[i * n + j];
      expect(s).toBeCloseTo(lam * w[j], 14);
    }
    expect(w[0] * B[0] + w[1] * B[1]).toBeCloseTo(0, 14);
  });

  it('the report text, the linearize text and the hover say it in Poise notation', () => {
    const text = formatReportText(buildReport(a, 'p', { validity: false, samples: 21 }));
    expect(text).toMatch(/λ = -0\.01333 \(×2\): decaying exponential/);
    expect(text).toContain('uncontrollable: mode 1 (direction 0.707·h1 − 0.707·h2)');
    expect(text).toContain('unobservable: mode 1 (direction 0.707·h1 − 0.707·h2)');
    expect(formatLinearText(a, lin, a.values(a.point('p')!), [], 5)).toMatch(/Eigenvalues \[1\/s\]: -0\.013333 \(×2\)/);
    const h = hover(a, twin.indexOf('point p') + 7)!.markdown;
    expect(h).toMatch(/-0\.01333 \(×2\)/);
    expect(h).toMatch(/algebraic multiplicity 2, 2 independent eigenvectors/);
    expect(h).toContain('Uncontrollable direction (mode 1): 0.707·h1 − 0.707·h2');
  });

  it('the report JSON carries the multiplicities and directions', () => {
    const r = JSON.parse(JSON.stringify(buildReport(a, 'p', { validity: false, samples: 21 })));
    expect(r.modes[0]).toMatchObject({ algebraicMultiplicity: 2, geometricMultiplicity: 2 });
    expect(r.controllability.failing[0].directions[0][0]).toMatchObject({ state: 'h1' });
  });

  it('independent route: the nonlinear step keeps h1 − h2 at zero', () => {
    const r = createSimulator(a, 'p')!.step({ du: [0.005], horizon: 300, samples: 31, rtol: 1e-9 });
    expect(r.status).toBe('ok');
    const scale = Math.max(...r.states[0].map(Math.abs));
    expect(scale).toBeGreaterThan(0.01);
    r.states[0].forEach((v, k) => expect(Math.abs(v - r.states[1][k])).toBeLessThanOrEqual(1e-9 * scale));
  });
});

describe('identical tanks in series: a defective double eigenvalue', () => {
  const a = analyze(dedent(`
    const area = 1.5 [m^2]
    const k = 0.02 [m^2.5/s]
    input feed [m^3/s]
    state h1 [m]
    state h2 [m]
    area*h1' = feed - k*sqrt(h1)
    area*h2' = k*sqrt(h1) - k*sqrt(h2)
    point p:
      feed = 0.01 [m^3/s]
      h1 ~ 0.3 [m]
      h2 ~ 0.3 [m]
  `));
  it('one mode, algebraic multiplicity 2, one eigenvector (h = 0.25 m, λ = −1/75 s⁻¹ as above)', () => {
    const dyn = analyzeDynamics(a.linear('p')!);
    expect(dyn.modes).toHaveLength(1);
    expect(dyn.modes[0].re).toBeCloseTo(lam, 7); // QR spreads a defective pair by about √ε·‖A‖
    expect(dyn.modes[0].algebraicMultiplicity).toBe(2);
    expect(dyn.modes[0].geometricMultiplicity).toBe(1);
    expect(dyn.controllability.full).toBe(true);
    expect(formatReportText(buildReport(a, 'p', { validity: false, samples: 21 }))).toMatch(/\(×2, 1 eigenvector\)/);
  });
});

describe('twin carts on springs pushed in parallel: a complex pair loses a plane', () => {
  // two identical carts (mass m, spring ks, damper c) each pushed by half of one force, the output their
  // summed position: the difference x1 − x2, v1 − v2 moves as an undriven damped oscillator that no
  // input moves and no output sees (common practice for identical subsystems in parallel). Its modes are
  // the pair λ = −c/(2m) ± i·√(ks/m − (c/2m)²); what is lost is the real plane of Re w and Im w, here
  // spanned by (x1 − x2)/√2 and (v1 − v2)/√2
  const a = analyze(dedent(`
    const m = 2 [kg]
    const ks = 50 [N/m]
    const c = 1 [N*s/m]
    input push [N]
    state x1, x2 [m]
    state v1, v2 [m/s]
    output sum [m] = x1 + x2
    x1' = v1
    x2' = v2
    m*v1' = push/2 - ks*x1 - c*v1
    m*v2' = push/2 - ks*x2 - c*v2
    point p:
      push = 10 [N]
  `));
  const lin = a.linear('p')!;
  const dyn = analyzeDynamics(lin);
  const order = ['x1', 'x2', 'v1', 'v2'];
  const vec = (d: { state: string; weight: number }[]) => order.map((s) => d.find((t) => t.state === s)?.weight ?? 0);

  it('names two orthonormal directions in the difference plane, for controllability and observability', () => {
    for (const test of [dyn.controllability, dyn.observability]) {
      expect(test.rank).toBe(2);
      expect(test.failing).toHaveLength(1);
      const f = test.failing[0];
      expect(f.re).toBeCloseTo(-1 / 4, 12);
      expect(f.im).toBeCloseTo(Math.sqrt(25 - 1 / 16), 12);
      expect(f.directions).toHaveLength(2);
      const [d1, d2] = f.directions.map(vec);
      // in the plane: weight(x1) = −weight(x2), weight(v1) = −weight(v2); orthonormal; spanning it
      for (const d of [d1, d2]) {
        expect(d[0] + d[1]).toBeCloseTo(0, 3);
        expect(d[2] + d[3]).toBeCloseTo(0, 3);
        expect(Math.hypot(...d)).toBeCloseTo(1, 3);
      }
      expect(d1.reduce((s, x, i) => s + x * d2[i], 0)).toBeCloseTo(0, 3);
      expect(Math.abs(d1[0] * d2[2] - d1[2] * d2[0])).toBeCloseTo(0.5, 3); // |det| of the plane's 2×2 coordinates
      // turned to the plane's nearest direction to one state: (x1 − x2)/√2, then (v1 − v2)/√2
      d1.forEach((x, i) => expect(x).toBeCloseTo([Math.SQRT1_2, -Math.SQRT1_2, 0, 0][i], 9));
      d2.forEach((x, i) => expect(x).toBeCloseTo([0, 0, Math.SQRT1_2, -Math.SQRT1_2][i], 9));
    }
  });

  it('independent route: the lost plane P has Pᵀ·B = 0 and Aᵀ maps P into P (from the linear model\'s own matrices)', () => {
    const { A, B, n, m } = lin;
    const P = dyn.controllability.failing[0].directions.map((d) => lin.states.map((s) => d.find((t) => t.state === s)?.weight ?? 0));
    for (const w of P) {
      for (let j = 0; j < m; j++) expect(Math.abs(w.reduce((s, x, i) => s + x * B[i * m + j], 0))).toBeLessThan(1e-9);
      const At = Array.from({ length: n }, (_, j) => w.reduce((s, x, i) => s + x * A[i * n + j], 0));
      // the residual of Aᵀw after projecting on P is zero
      const r = At.slice();
      for (const q of P) {
        const d = q.reduce((s, x, i) => s + x * At[i], 0);
        for (let i = 0; i < n; i++) r[i] -= d * q[i];
      }
      expect(Math.hypot(...r)).toBeLessThan(1e-6 * Math.hypot(...At));
    }
  });

  it('the report text prints both directions', () => {
    const text = formatReportText(buildReport(a, 'p', { validity: false, samples: 21 }));
    expect(text).toContain('uncontrollable: mode 1 (directions 0.707·x1 − 0.707·x2; 0.707·v1 − 0.707·v2)');
    expect(text).toContain('unobservable: mode 1 (directions 0.707·x1 − 0.707·x2; 0.707·v1 − 0.707·v2)');
  });
});
