/**
 * The operating-point solver (trim problems, scaling, determinism, size) and models of other kinds than
 * the examples, each solved and linearised and compared with closed forms derived by hand in the
 * comments (the derivations are ours; the physical laws are textbook, named where used).
 */
import fc from 'fast-check';
import { Matrix, solve as mlSolve } from 'ml-matrix';
import { describe, expect, it } from 'vitest';
import { analyze } from '../server/src/core/pipeline/analysis';
import { sparseLU } from '../server/src/core/numeric/sparseLU';
import { exportLinear } from '../server/src/core/present/exports';
import { dedent, expectClose, solve } from './helpers/model';

const G = 9.81;

describe('trim: fix a state, free an input', () => {
  // tank with Torricelli outflow (q = k·√h, common practice): holding h = 1.5 m needs q_in = k·√1.5
  const text = dedent(`
    const area = 1.2 [m^2]
    const k = 0.01 [m^2.5/s]
    input feed [m^3/s]
    state level [m]
    area*level' = feed - k*sqrt(level)
    point hold:
      level = 1.5 [m]
      feed ~ 0.001 [m^3/s]
  `);
  it('finds the input that holds the state', () => {
    const s = solve(text);
    expectClose(s.value('feed'), 0.01 * Math.sqrt(1.5), 1e-10);
    expect(s.value('level')).toBe(1.5);
    const roles = new Map(s.a.values(s.sol).map((v) => [v.name, v.role]));
    expect(roles.get('level')).toBe('fixed');
    expect(roles.get('feed')).toBe('solved');
    // the linear model is the same as at the forward point: A = −k/(2·area·√h0)
    expectClose(s.A('level', 'level'), -0.01 / (2 * 1.2 * Math.sqrt(1.5)), 1e-10);
  });
});

describe('Jacobian entries that are exactly zero at the point', () => {
  // a' = −a + b², b' = a − b has the equilibria b = 0 and b = 1 (a = b). At the origin the Jacobian
  // [[−1, 2b], [1, −1]] = [[−1, 0], [1, −1]] is regular (eigenvalues −1, −1): isolated, even though one of
  // its structural entries is 0 there. At (1, 1): [[−1, 2], [1, −1]], eigenvalues −1 ± √2.
  const text = dedent(`
    state a, b
    a' = -a + b^2
    b' = a - b
    point origin:
      a ~ 0.1
      b ~ 0.1
    point other:
      a ~ 1.2
      b ~ 0.9
  `);
  it('the origin is an isolated equilibrium with a double eigenvalue −1', () => {
    const s = solve(text, 'origin');
    expect(Math.abs(s.value('b'))).toBeLessThan(1e-12);
    expect(s.A('a', 'b')).toBe(0);
    for (const e of s.eig()) expectClose(e.re, -1, 1e-6);
  });
  it('(1, 1) is a saddle with eigenvalues −1 ± √2', () => {
    const s = solve(text, 'other');
    expectClose(s.value('b'), 1, 1e-12);
    const re = s.eig().map((e) => e.re).sort((x, y) => x - y);
    expectClose(re[0], -1 - Math.SQRT2, 1e-9);
    expectClose(re[1], -1 + Math.SQRT2, 1e-9);
  });
  it('the sparse LU solves matrices with explicit zero and duplicate entries like ml-matrix does', () => {
    // reference: ml-matrix's dense LU solve (a reference library, not our code)
    const entry = fc.record({ r: fc.nat(7), c: fc.nat(7), v: fc.oneof(fc.constant(0), fc.constant(-0), fc.double({ min: -2, max: 2, noNaN: true })) });
    fc.assert(
      fc.property(fc.integer({ min: 1, max: 8 }), fc.array(entry, { maxLength: 40 }), (n, raw) => {
        const es = raw.map((e) => ({ row: e.r % n, col: e.c % n, val: e.v }));
        // a dominant diagonal keeps it regular; given as two duplicates to exercise summing
        for (let i = 0; i < n; i++) es.push({ row: i, col: i, val: 10 }, { row: i, col: i, val: 10 });
        const dense = Matrix.zeros(n, n);
        for (const e of es) dense.set(e.row, e.col, dense.get(e.row, e.col) + e.val);
        const b = Float64Array.from({ length: n }, (_, i) => i + 1);
        const lu = sparseLU(n, es);
        expect(lu.ok).toBe(true);
        const x = lu.solve(b);
        const ref = mlSolve(dense, Matrix.columnVector(Array.from(b)));
        for (let i = 0; i < n; i++) expect(Math.abs(x[i] - ref.get(i, 0))).toBeLessThan(1e-12 * Math.max(1, Math.abs(ref.get(i, 0))));
      }),
      { numRuns: 300, seed: 5150 },
    );
  });
});

describe('scaling: pascals and metres in one model', () => {
  // Pressurised tank: p_bottom = p_gas + ρ·g·h (hydrostatics), outflow to atmosphere through an orifice
  // q = kv·√((p_bottom − p_atm)/ρ) (turbulent, common practice). Steady state q = q_in gives
  //   p_bottom − p_atm = ρ·(q_in/kv)²,   h = (ρ·(q_in/kv)² + p_atm − p_gas)/(ρ·g)
  // with q_in = 0.004 m³/s, kv = 4e-4 m²: (q/kv)² = 100 m²/s², ρ·100 = 1e5 Pa, h = (1e5 + 101325 − 1.9e5)/9810.
  const model = (pu: string, guesses: string) => dedent(`
    const rho = 1000 [kg/m^3]
    const g = ${G} [m/s^2]
    const patm = 101325 [Pa]
    const kv = 4e-4 [m^2]
    const area = 3 [m^2]
    input qin [m^3/s]
    input pgas [${pu}]
    state level [m]
    var pbot [${pu}]
    var qout [m^3/s]
    pbot = pgas + rho*g*level
    qout = kv*sqrt((pbot - patm)/rho)
    area*level' = qin - qout
    point run:
      qin = 0.004 [m^3/s]
      pgas = 1.9e5 [Pa]
  `) + guesses + '\n';
  const h = (1e5 + 101325 - 1.9e5) / (1000 * G);
  it.each([
    ['Pa', '  level ~ 3 [m]\n  pbot ~ 150000 [Pa]'],
    ['bar', '  level ~ 3 [m]\n  pbot ~ 1.5 [bar]'],
    ['Pa', '  level ~ 0.2 [m]\n  pbot ~ 400000 [Pa]'],
  ])('converges with pressures in %s (guesses %#)', (pu, guesses) => {
    const s = solve(model(pu, guesses));
    expectClose(s.value('level'), h, 1e-9);
    const k = pu === 'bar' ? 1e-5 : 1;
    expectClose(s.value('pbot'), (1e5 + 101325) * k, 1e-10);
    expect(s.sol.iterations).toBeLessThan(50);
    // A = −∂q/∂h/area = −kv·ρ·g/(2·ρ·√((p_b − p_atm)/ρ))/area = −kv·g/(2·(q/kv))/area
    expectClose(s.A('level', 'level'), -(4e-4 * G) / (2 * 10) / 3, 1e-8);
  });
});

describe('determinism', () => {
  it('the same model gives bit-identical points and matrices twice', () => {
    const text = dedent(`
      const mu = 0.7
      input u
      state x, y
      var z
      x' = y
      y' = mu*(1 - x^2)*y - x + z
      z + 0.2*z^3 = u + 0.1*sin(x)
      point p:
        u = 0.4
        x ~ 0.1
        z ~ 0
    `);
    const a1 = analyze(text);
    const a2 = analyze(text);
    const s1 = a1.point('p')!;
    const s2 = a2.point('p')!;
    expect(s1.ok).toBe(true);
    expect(Array.from(s1.values)).toEqual(Array.from(s2.values));
    expect(s1.iterations).toBe(s2.iterations);
    expect(Array.from(a1.linear('p')!.A)).toEqual(Array.from(a2.linear('p')!.A));
    expect(Array.from(a1.linear('p')!.B)).toEqual(Array.from(a2.linear('p')!.B));
  });
});

describe('a chain of tanks: 300 coupled unknowns', () => {
  // N tanks in series with turbulent links q_i = k·√(h_i − h_{i+1}) and outlet q_N = k·√h_N. At steady
  // state every q_i = q_in, so each link drops (q_in/k)² and h_i = (N − i + 1)·(q_in/k)². Linearised,
  // every link has the conductance g = ∂q/∂Δh = k/(2√Δh) = k²/(2·q_in), so A is tridiagonal:
  // A[1,1] = −g/area, A[i,i] = −2g/area (i > 1), A[i,i±1] = g/area.
  const N = 150;
  const k = 0.02;
  const qin = 0.01;
  const lines = ['const area = 2 [m^2]', `const k = ${k} [m^2.5/s]`, 'input qin [m^3/s]'];
  for (let i = 1; i <= N; i++) lines.push(`state h${i} [m]`, `var q${i} [m^3/s]`);
  for (let i = 1; i <= N; i++) {
    lines.push(`area*h${i}' = ${i === 1 ? 'qin' : `q${i - 1}`} - q${i}`);
    lines.push(`q${i} = k*sqrt(h${i}${i < N ? ` - h${i + 1}` : ''})`);
  }
  lines.push('point steady:', `  qin = ${qin} [m^3/s]`);
  // guesses 40 % of the answer, with the right ordering
  for (let i = 1; i <= N; i++) lines.push(`  h${i} ~ ${0.4 * (N - i + 1) * (qin / k) ** 2} [m]`);
  const text = lines.join('\n') + '\n';

  it('solves and linearises', () => {
    const a = analyze(text);
    const sol = a.point('steady')!;
    expect(sol.diagnostics).toEqual([]);
    expect(sol.unknowns.length).toBe(2 * N);
    const s = solve(text);
    const drop = (qin / k) ** 2;
    for (const i of [1, 2, 75, N - 1, N]) expectClose(s.value(`h${i}`), (N - i + 1) * drop, 1e-9, 0, `h${i}`);
    for (const i of [1, 75, N]) expectClose(s.value(`q${i}`), qin, 1e-9, 0, `q${i}`);
    const g = (k * k) / (2 * qin);
    expectClose(s.A('h1', 'h1'), -g / 2, 1e-8);
    expectClose(s.A('h1', 'h2'), g / 2, 1e-8);
    expectClose(s.A('h75', 'h75'), (-2 * g) / 2, 1e-8);
    expectClose(s.A('h75', 'h74'), g / 2, 1e-8);
    expectClose(s.A('h75', 'h76'), g / 2, 1e-8);
    expect(s.A('h75', 'h77')).toBe(0);
    expectClose(s.A(`h${N}`, `h${N}`), (-2 * g) / 2, 1e-8);
    expectClose(s.B('h1', 'qin'), 1 / 2, 1e-12);
  });
});

describe('models of other kinds', () => {
  it('magnetic levitation: a ball under an electromagnet (current, voltage, inductance)', () => {
    // m·z'' = m·g − km·i²/z² (force of an electromagnet on a steel ball, common textbook model; z the gap)
    // L·i' = v − R·i. Trim: hold z0 = 8 mm. Statics: km·i0²/z0² = m·g → i0 = z0·√(m·g/km), v0 = R·i0.
    // Linearised: ∂z''/∂z = 2·km·i0²/(m·z0³) = 2g/z0, ∂z''/∂i = −2·km·i0/(m·z0²) = −2g/i0 (m/s² per A,
    // ×1000 in mm/s²), ∂i'/∂i = −R/L, ∂i'/∂v = 1/L. Eigenvalues ±√(2g/z0) (unstable) and −R/L.
    const m = 0.05;
    const km = 2.5e-5;
    const R = 4;
    const L = 0.12;
    const z0 = 0.008;
    const s = solve(dedent(`
      const m = ${m} [kg]
      const km = ${km} [N*m^2/A^2]
      const g = ${G} [m/s^2]
      const res = ${R} [ohm]
      const ind = ${L} [H]
      input volt [V]
      state gap [mm]
      state cur [A]
      m*gap'' = m*g - km*cur^2/gap^2
      ind*cur' = volt - res*cur
      point hover:
        gap = 8 [mm]
        volt ~ 3 [V]
        cur ~ 1 [A]
    `));
    const i0 = z0 * Math.sqrt((m * G) / km);
    expectClose(s.value('cur'), i0, 1e-9);
    expectClose(s.value('volt'), R * i0, 1e-9);
    expectClose(s.A("gap'", 'gap'), (2 * G) / z0, 1e-9);
    expectClose(s.A("gap'", 'cur'), ((-2 * G) / i0) * 1000, 1e-9);
    expectClose(s.A('gap', "gap'"), 1, 1e-12);
    expectClose(s.A('cur', 'cur'), -R / L, 1e-12);
    expectClose(s.B('cur', 'volt'), 1 / L, 1e-12);
    const eig = s.eig().map((e) => e.re).sort((a, b) => a - b);
    expectClose(eig[0], -Math.sqrt((2 * G) / z0), 1e-8);
    expectClose(eig[1], -R / L, 1e-8);
    expectClose(eig[2], Math.sqrt((2 * G) / z0), 1e-8);
  });

  it('gas pressure vessel: isothermal ideal gas, laminar supply valve, turbulent vent', () => {
    // V/(R·T)·p' = w_in − w_out (ideal gas, isothermal), w_in = c_in·u·(p_s − p), w_out = c_out·√(p − p_a).
    // Steady state with s = √(p − p_a) and a = c_in·u: a·s² + c_out·s − a·(p_s − p_a) = 0, so
    //   s = (−c_out + √(c_out² + 4a²(p_s − p_a)))/(2a),  p = p_a + s².
    // Linearised (SI): A = (R·T/V)·(−a − c_out/(2s)), B_u = (R·T/V)·c_in·(p_s − p) Pa/s → /1e5 in bar/s.
    const V = 0.5;
    const T = 293;
    const Rg = 8.314;
    const ps = 6e5;
    const pa = 101325;
    const cin = 2e-5;
    const cout = 0.008;
    const u = 0.6;
    const s = solve(dedent(`
      const vol = ${V} [m^3]
      const temp = ${T} [K]
      const rgas = ${Rg} [J/(mol*K)]
      const psup = 6 [bar]
      const patm = ${pa} [Pa]
      const cin = ${cin} [mol/(s*Pa)]
      const cout = ${cout} [mol/(s*Pa^0.5)]
      input valve
      state p [bar]
      var win, wout [mol/s]
      vol/(rgas*temp)*p' = win - wout
      win = valve*cin*(psup - p)
      wout = cout*sqrt(p - patm)
      point normal:
        valve = ${u}
        p ~ 2 [bar]
    `));
    const a = cin * u;
    const sq = (-cout + Math.sqrt(cout * cout + 4 * a * a * (ps - pa))) / (2 * a);
    const p = pa + sq * sq;
    expectClose(s.value('p'), p / 1e5, 1e-9);
    expectClose(s.value('win'), cout * sq, 1e-9);
    const k = (Rg * T) / V;
    expectClose(s.A('p', 'p'), k * (-a - cout / (2 * sq)), 1e-9);
    expectClose(s.B('p', 'valve'), (k * cin * (ps - p)) / 1e5, 1e-9);
    expectClose(s.eig()[0].re, s.A('p', 'p'), 1e-12);
  });

  it('DC motor driving an arm through a flexible shaft (coupled second order, angles in rad and deg)', () => {
    // Jm·θm'' = kt·i − ks·(θm − θl) − cs·(θm' − θl'),  Jl·θl'' = ks·(θm − θl) + cs·(θm' − θl') − bl·θl' − mgr·sin θl,
    // L·i' = v − R·i − ke·θm' (DC motor with torque constant kt and back-emf constant ke; two-inertia shaft).
    // Trim: hold the arm at θl = 40°. Statics: ks·(θm − θl) = mgr·sin θl = kt·i, v = R·i.
    // A rows (θm in rad, θl in deg, so a θl column carries π/180 and a θl'' row 180/π):
    //   θm'':  [−ks/Jm, −cs/Jm, (ks/Jm)·π/180, (cs/Jm)·π/180, kt/Jm]
    //   θl'':  [(ks/Jl)·180/π, (cs/Jl)·180/π, −(ks + mgr·cos θl)/Jl, −(cs + bl)/Jl, 0]
    //   i':    [0, −ke/L, 0, 0, −R/L],  B: 1/L
    const P = { jm: 2e-4, jl: 0.02, ks: 15, cs: 0.02, bl: 0.01, mgr: 0.8, kt: 0.05, ke: 0.05, R: 1.2, L: 2e-3 };
    const s = solve(dedent(`
      const jm = ${P.jm} [kg*m^2]
      const jl = ${P.jl} [kg*m^2]
      const ks = ${P.ks} [N*m/rad]
      const cs = ${P.cs} [N*m*s/rad]
      const bl = ${P.bl} [N*m*s/rad]
      const mgr = ${P.mgr} [N*m]
      const kt = ${P.kt} [N*m/A]
      const ke = ${P.ke} [V*s/rad]
      const res = ${P.R} [ohm]
      const ind = 2 [mH]
      input volt [V]
      state thm [rad]
      state thl [deg]
      state cur [A]
      jm*thm'' = kt*cur - ks*(thm - thl) - cs*(thm' - thl')
      jl*thl'' = ks*(thm - thl) + cs*(thm' - thl') - bl*thl' - mgr*sin(thl)
      ind*cur' = volt - res*cur - ke*thm'
      point hold:
        thl = 40 [deg]
        volt ~ 5 [V]
        thm ~ 0.7 [rad]
    `));
    const thl = (40 * Math.PI) / 180;
    const i0 = (P.mgr * Math.sin(thl)) / P.kt;
    expectClose(s.value('cur'), i0, 1e-9);
    expectClose(s.value('volt'), P.R * i0, 1e-9);
    expectClose(s.value('thm'), thl + (P.mgr * Math.sin(thl)) / P.ks, 1e-9);
    const d2r = Math.PI / 180;
    const rowM: [string, number][] = [['thm', -P.ks / P.jm], ["thm'", -P.cs / P.jm], ['thl', (P.ks / P.jm) * d2r], ["thl'", (P.cs / P.jm) * d2r], ['cur', P.kt / P.jm]];
    for (const [c, v] of rowM) expectClose(s.A("thm'", c), v, 1e-9, 0, `A[thm', ${c}]`);
    const rowL: [string, number][] = [['thm', P.ks / P.jl / d2r], ["thm'", P.cs / P.jl / d2r], ['thl', -(P.ks + P.mgr * Math.cos(thl)) / P.jl], ["thl'", -(P.cs + P.bl) / P.jl]];
    for (const [c, v] of rowL) expectClose(s.A("thl'", c), v, 1e-9, 0, `A[thl', ${c}]`);
    expect(s.A("thl'", 'cur')).toBe(0);
    expectClose(s.A('cur', "thm'"), -P.ke / P.L, 1e-9);
    expectClose(s.A('cur', 'cur'), -P.R / P.L, 1e-9);
    expectClose(s.B('cur', 'volt'), 1 / P.L, 1e-9);
    expect(s.lin.states).toEqual(['thm', "thm'", 'thl', "thl'", 'cur']);
    // a held arm with damping everywhere: stable
    for (const e of s.eig()) expect(e.re).toBeLessThan(0);
  });

  it('pH of a buffer: acid–base equilibrium as an implicit algebraic loop', () => {
    // Mixing tank fed with acetic acid (qa, cain) and sodium hydroxide (qb, cbin). Totals ca (acetate) and
    // cna (sodium) are states; the hydrogen ion concentration h follows from the charge balance
    //   h + cna = ca·Ka/(Ka + h) + Kw/h        (implicit in h; textbook acid–base equilibrium)
    // and pH = −log10(h / 1 mol/L). Trim: fix pH = pKa (so h = Ka) and free the base flow qb.
    // At h = Ka the balance gives cna = ca/2 + δ with δ = Kw/Ka − Ka; with ca = qa·cain/(qa + qb) and
    // cna = qb·cbin/(qa + qb):  qb = qa·(cain/2 + δ)/(cbin − δ).
    // Linearised (implicit function theorem): F_h = 1 + ca·Ka/(Ka + h)² + Kw/h² = 1 + ca/(4Ka) + Kw/Ka²,
    //   dh/dca = (1/2)/F_h, dh/dcna = −1/F_h, dpH/dh = −1/(h·ln 10).
    //   A[ca,ca] = A[cna,cna] = −(qa + qb)/V; B[ca,qa] = (cain − ca)/V, B[ca,qb] = −ca/V,
    //   B[cna,qa] = −cna/V, B[cna,qb] = (cbin − cna)/V; in declared units a flow in L/min is 1/60000 m³/s
    //   and a concentration in mol/L is 1000 mol/m³.
    const V = 2; // m³
    const cain = 0.1;
    const cbin = 0.2;
    const Ka = 1.75e-5;
    const Kw = 1e-14;
    const qa = 30; // L/min
    const s = solve(dedent(`
      const vol = ${V} [m^3]
      const cain = ${cain} [mol/L]
      const cbin = ${cbin} [mol/L]
      const ka = ${Ka} [mol/L]
      const kw = ${Kw} [mol^2/L^2]
      input qa [L/min]
      input qb [L/min]
      state ca [mol/L]
      state cna [mol/L]
      var h [mol/L]
      output ph = -log10(h/(1 [mol/L]))
      vol*ca' = qa*cain - (qa + qb)*ca
      vol*cna' = qb*cbin - (qa + qb)*cna
      h + cna = ca*ka/(ka + h) + kw/h
      point buffer:
        qa = ${qa} [L/min]
        ph = -log10(ka/(1 [mol/L]))
        qb ~ 5 [L/min]
        h ~ 1e-4 [mol/L]
        ca ~ 0.05 [mol/L]
        cna ~ 0.01 [mol/L]
    `));
    const delta = Kw / Ka - Ka;
    const qb = (qa * (cain / 2 + delta)) / (cbin - delta);
    const ca = (qa * cain) / (qa + qb);
    const cna = (qb * cbin) / (qa + qb);
    expectClose(s.value('qb'), qb, 1e-9);
    expectClose(s.value('h'), Ka, 1e-9);
    expectClose(s.value('ca'), ca, 1e-9);
    expectClose(s.value('cna'), cna, 1e-9);
    const Vl = V * 1000; // L
    const perMin = 1 / 60; // A per second from L/min and L
    expectClose(s.A('ca', 'ca'), (-(qa + qb) / Vl) * perMin, 1e-9);
    expectClose(s.A('cna', 'cna'), (-(qa + qb) / Vl) * perMin, 1e-9);
    expect(s.A('ca', 'cna')).toBe(0);
    expectClose(s.B('ca', 'qa'), ((cain - ca) / Vl) * perMin, 1e-9);
    expectClose(s.B('ca', 'qb'), (-ca / Vl) * perMin, 1e-9);
    expectClose(s.B('cna', 'qa'), (-cna / Vl) * perMin, 1e-9);
    expectClose(s.B('cna', 'qb'), ((cbin - cna) / Vl) * perMin, 1e-9);
    const Fh = 1 + ca / (4 * Ka) + Kw / (Ka * Ka);
    const dpdh = -1 / (Ka * Math.LN10);
    expectClose(s.C('ph', 'ca'), dpdh * (0.5 / Fh), 1e-8);
    expectClose(s.C('ph', 'cna'), dpdh * (-1 / Fh), 1e-8);
    expect(s.D('ph', 'qa')).toBe(0);
  });
});

describe('point accuracy: Newton to the limit of double precision', () => {
  // Our resistor–capacitor circuit with a diode (Shockley law i = Is·(exp(vd/nVt) − 1), common practice)
  // in series with Rd: an algebraic loop between i and vd, time in ms.
  const text = dedent(`
    time [ms]
    const R = 1 [kohm]
    const C = 10 [uF]
    const Rd = 20 [ohm]
    const Is = 2.5e-9 [A]
    const nVt = 51.7 [mV]
    input Vs [V]
    state vc [V]
    var i [mA]
    var vd [V]
    C*vc' = (Vs - vc)/R - i
    i = Is*(exp(vd/nVt) - 1)
    vd = vc - Rd*i
    point on:
      Vs = 5 [V]
      vc ~ 1 [V]
      i ~ 1 [mA]
      vd ~ 0.6 [V]
  `);
  it('reaches a relative residual ≤ 1e-15 and the 50-digit solution to the last bits', () => {
    const s = solve(text);
    // the achieved relative residual the solver reports (was 4e-11 before the final polishing steps)
    expect(s.sol.residual).toBeLessThanOrEqual(1e-15);
    // mpmath (mp.dps = 50): findroot(lambda vc, i, vd: [(5 - vc)/1000 - i, i - mpf('2.5e-9')*(exp(vd/mpf('0.0517')) - 1),
    // vd - vc + 20*i], (1, 0.004, 0.7)) → vc = 0.82429765185839128228707742621167888788, i = 0.00417570234814160871771292257378832 A,
    // vd = 0.74078360489555910793281897473591246564 V
    expectClose(s.value('vc'), 0.82429765185839128228707742621167888788, 4e-16);
    expectClose(s.value('i'), 4.17570234814160871771292257378832, 4e-16); // mA
    expectClose(s.value('vd'), 0.74078360489555910793281897473591246564, 4e-16);
    // independent route: the residuals recomputed here in double precision from the reported values,
    // each relative to its largest sensitivity times the size of that unknown (as in the solver's measure:
    // exp(vd/nVt) turns one rounding of vd into 14 roundings of i)
    const vc = s.value('vc');
    const i = s.value('i') / 1000;
    const vd = s.value('vd');
    const e = 2.5e-9 * (Math.exp(vd / 0.0517) - 1);
    expect(Math.abs((5 - vc) / 1000 - i) / Math.max(5 / 1000, i)).toBeLessThanOrEqual(2e-15);
    expect(Math.abs(i - e) / Math.max(i, (e * vd) / 0.0517)).toBeLessThanOrEqual(2e-15);
    expect(Math.abs(vd - vc + 20 * i) / vc).toBeLessThanOrEqual(2e-15);
    // the JSON export carries the achieved residual and the iterations
    const j = JSON.parse(exportLinear(s.a, 'on', 'json')) as { solve: { iterations: number; residual: number } };
    expect(j.solve).toEqual({ iterations: s.sol.iterations, residual: s.sol.residual });
  });
});
