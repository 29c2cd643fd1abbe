/** Generated models for benchmarks and scale tests (invented data, demo only). */

/** A chain of n tanks with turbulent links: tank i drains into tank i+1 through q_i = k*sqrt(h_i − h_{i+1}). */
export function tankChain(n: number): string {
  const L: string[] = [];
  L.push(`# chain of ${n} tanks with turbulent links (generated)`);
  L.push('const area = 1.5 [m^2]');
  L.push('const k = 0.01 [m^2.5/s]');
  L.push('input qin [m^3/s]');
  for (let i = 1; i <= n; i++) L.push(`state h${i} [m]`);
  for (let i = 1; i <= n; i++) L.push(`var q${i} [m^3/s]`);
  L.push(`output level_last [cm] = h${n}`);
  for (let i = 1; i <= n; i++) {
    L.push(`area*h${i}' = ${i === 1 ? 'qin' : `q${i - 1}`} - q${i}`);
    L.push(i < n ? `q${i} = k*sqrt(h${i} - h${i + 1})` : `q${i} = k*sqrt(h${i})`);
  }
  L.push('point nominal:');
  L.push('  qin = 0.01 [m^3/s]');
  // exact steady state: every link drops (qin/k)^2 = 1 m; start 10 % off
  for (let i = 1; i <= n; i++) L.push(`  h${i} ~ ${((n - i + 1) * 1.1).toFixed(2)} [m]`);
  for (let i = 1; i <= n; i++) L.push(`  q${i} ~ 0.011 [m^3/s]`);
  return L.join('\n') + '\n';
}

/** Same chain as a SymPy script that does the whole job (solve the point, Jacobians, linear model). */
export function tankChainSympy(n: number): string {
  return `
import time, sys
t0 = time.perf_counter()
import sympy as sp, numpy as np
n = ${n}
area, k, qin = 1.5, 0.01, 0.01
h = sp.symbols('h1:%d' % (n + 1)); q = sp.symbols('q1:%d' % (n + 1)); u = sp.Symbol('qin')
dh = sp.symbols('dh1:%d' % (n + 1))
eqs = []
for i in range(n):
    inflow = u if i == 0 else q[i - 1]
    eqs.append(area * dh[i] - (inflow - q[i]))
    eqs.append(q[i] - k * sp.sqrt(h[i] - h[i + 1]) if i < n - 1 else q[i] - k * sp.sqrt(h[i]))
unk = list(h) + list(q)
ss = [e.subs({d: 0 for d in dh}) for e in eqs]
J = sp.Matrix(ss).jacobian(unk)
f = sp.lambdify([unk, u], ss, 'numpy'); fj = sp.lambdify([unk, u], J, 'numpy')
x = np.array([(n - i) * 1.1 for i in range(n)] + [0.011] * n)
for it in range(50):
    F = np.array(f(x, qin), dtype=float)
    if np.max(np.abs(F)) < 1e-12: break
    x = x - np.linalg.solve(np.array(fj(x, qin), dtype=float), F)
W = list(dh) + list(q)
allv = list(dh) + unk + [u]
fw = sp.lambdify([allv], sp.Matrix(eqs).jacobian(W), 'numpy')
fx = sp.lambdify([allv], sp.Matrix(eqs).jacobian(list(h)), 'numpy')
fu = sp.lambdify([allv], sp.Matrix(eqs).jacobian([u]), 'numpy')
pt = [0.0] * n + list(x) + [qin]
Mw = np.array(fw(pt), dtype=float); Mx = np.array(fx(pt), dtype=float); Mu = np.array(fu(pt), dtype=float)
S = -np.linalg.solve(Mw, np.hstack([Mx, Mu]))
A = S[:n, :n]; B = S[:n, n:]
print('%.6f %.12g' % (time.perf_counter() - t0, A[0, 0]))
`;
}

/** The same chain as {@link tankChain}, written with families and each blocks (identical equations). */
export function tankChainFamily(n: number): string {
  const L: string[] = [];
  L.push(`# chain of ${n} tanks with turbulent links, written as families (generated)`);
  L.push(`const n = ${n}`);
  L.push('const area = 1.5 [m^2]');
  L.push('const k = 0.01 [m^2.5/s]');
  L.push('input qin [m^3/s]');
  L.push('state h[1..n] [m]');
  L.push('var q[1..n] [m^3/s]');
  L.push('output level_last [cm] = h[n]');
  L.push("area*h[1]' = qin - q[1]");
  if (n > 1) {
    L.push('each i in 2..n:');
    L.push("  area*h[i]' = q[i-1] - q[i]");
    L.push('each i in 1..n-1: q[i] = k*sqrt(h[i] - h[i+1])');
  }
  L.push('q[n] = k*sqrt(h[n])');
  L.push('point nominal:');
  L.push('  qin = 0.01 [m^3/s]');
  L.push(`  h ~ {${Array.from({ length: n }, (_, i) => ((n - i) * 1.1).toFixed(2)).join(', ')}} [m]`);
  L.push('  q ~ 0.011 [m^3/s]');
  return L.join('\n') + '\n';
}

/** tankChain with the names a family gives its elements (h[i], q[i]): the flat text of tankChainFamily. */
export function tankChainFlatElements(n: number): string {
  return tankChain(n).replace(/\b([hq])(\d+)\b/g, '$1[$2]');
}
