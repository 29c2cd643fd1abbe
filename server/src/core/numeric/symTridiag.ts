/**
 * Eigenvalues of a symmetric tridiagonal matrix by the root-free QL iteration with implicit shifts of Pal,
 * Walker and Kahan (the squared off-diagonals are iterated, so no square root is taken per rotation;
 * published in B. N. Parlett, "The Symmetric Eigenvalue Problem", SIAM 1998, ch. 8, the section on
 * root-free variants — section from memory), with several sweeps in flight at once.
 *
 * Each QL sweep is a recurrence whose steps wait on two divisions, so a single sweep is bound by the
 * latency of division. Sweep B with another shift only needs sweep A to be two positions ahead, so
 * four sweeps with four shifts (the eigenvalues of the leading 4×4 block) run interleaved in one
 * loop: the processor overlaps their independent chains, and four sweeps cost little more than one.
 * Applying the sweeps one after the other gives the same arithmetic; only their order in time
 * changes. This is the small-bulge idea of Braman, Byers & Mathias (2002) for the tridiagonal case.
 */

const EPS = 2.220446049250313e-16;
/** Sweeps in flight and the distance (in steps) between consecutive ones. */
const K = 4;
const LAG = 2;
/** Multishift sweeps allowed on one block before it goes on with single Wilkinson shifts. */
const MULTI_TRIES = 8;

/**
 * One QL step with shift sigma at position k (row j = m−1−k) for the sweep whose state
 * (c, s, gamma, p) is st[o..o+3]. Used for the start and the end of the interleaved sweeps.
 */
function step(d: Float64Array, e2: Float64Array, m: number, k: number, sigma: number, st: Float64Array, o: number): void {
  const j = m - 1 - k;
  const bb = e2[j];
  const p = st[o + 3];
  const r = p + bb;
  if (k !== 0) e2[j + 1] = st[o + 1] * r;
  const oc = st[o];
  // r = 0 only when both the off-diagonal and the carried p are zero: the vector to rotate is zero and
  // any rotation does; the identity (c = 1, s = 0) is the choice of LAPACK's dlartg for (0, 0)
  const c = r !== 0 ? p / r : 1;
  const s = r !== 0 ? bb / r : 0;
  const og = st[o + 2];
  const al = d[j];
  const g = c * (al - sigma) - s * og;
  d[j + 1] = og + (al - g);
  st[o] = c;
  st[o + 1] = s;
  st[o + 2] = g;
  st[o + 3] = c !== 0 ? (g * g) / c : oc * bb;
}

function start(d: Float64Array, m: number, sigma: number, st: Float64Array, o: number): void {
  const g = d[m] - sigma;
  st[o] = 1;
  st[o + 1] = 0;
  st[o + 2] = g;
  st[o + 3] = g * g;
}

function finish(d: Float64Array, e2: Float64Array, l: number, sigma: number, st: Float64Array, o: number): void {
  e2[l] = st[o + 1] * st[o + 3];
  d[l] = sigma + st[o + 2];
}

/** The shift of one QL step: the eigenvalue of the leading 2×2 block nearer d[l]. */
function wilkinson(d: Float64Array, e2: Float64Array, l: number): number {
  const rte = Math.sqrt(e2[l]);
  const sg = (d[l + 1] - d[l]) / (2 * rte);
  const r = Math.hypot(sg, 1);
  return d[l] - rte / (sg + (sg >= 0 ? r : -r));
}

/** Both eigenvalues of [[a, b], [b, c]] (b² given), the larger in magnitude computed first. */
function twoByTwo(d: Float64Array, l: number, b2: number): void {
  const a = d[l], c = d[l + 1];
  const b = Math.sqrt(b2);
  const sm = a + c;
  const rt = Math.hypot(a - c, 2 * b);
  let rt1: number, rt2: number;
  if (sm !== 0) {
    rt1 = 0.5 * (sm + (sm > 0 ? rt : -rt));
    rt2 = (Math.max(a, c) / rt1) * Math.min(a, c) - (b / rt1) * b;
  } else {
    rt1 = 0.5 * rt;
    rt2 = -0.5 * rt;
  }
  d[l] = rt1;
  d[l + 1] = rt2;
}

/**
 * QL iteration on d (n diagonal entries) and e2 (n−1 squared off-diagonals, destroyed); d becomes the
 * eigenvalues (unordered). tol2 is an absolute tolerance for e2. Returns false when some block
 * needed more sweeps than allowed.
 */
function ql(d: Float64Array, e2: Float64Array, n: number, tol2: number, multi: boolean): boolean {
  const eps2 = EPS * EPS;
  const st = new Float64Array(4 * K);
  const sh = new Float64Array(K);
  const se = new Float64Array(K);
  let sweeps = 0;
  let l = 0;
  // sweeps made on the same unreduced block [lastL, lastM] without a deflation
  let lastL = -1, lastM = -1, stuck = 0;
  while (l < n) {
    let m = l;
    for (; m < n - 1; m++) {
      const x = e2[m];
      if (x <= eps2 * Math.abs(d[m] * d[m + 1]) || x <= tol2) break;
    }
    if (m === l) {
      l++;
      continue;
    }
    if (m === l + 1) {
      twoByTwo(d, l, e2[l]);
      e2[l] = 0;
      l += 2;
      continue;
    }
    if (++sweeps > 30 * n + 30) return false;
    if (l === lastL && m === lastM) stuck++;
    else (lastL = l), (lastM = m), (stuck = 0);
    const steps = m - l;
    // A safeguard: nothing proves that four shifts from the leading block always make a block split; the
    // single Wilkinson shift converges on every unreduced symmetric tridiagonal matrix (Wilkinson 1968,
    // global convergence of the shifted QL/QR), so a block that has not split after MULTI_TRIES
    // multishift sweeps goes on with single shifts.
    if (!multi || steps < 4 * K || stuck >= MULTI_TRIES) {
      const sigma = wilkinson(d, e2, l);
      start(d, m, sigma, st, 0);
      for (let k = 0; k < steps; k++) step(d, e2, m, k, sigma, st, 0);
      finish(d, e2, l, sigma, st, 0);
      continue;
    }
    // shifts: the eigenvalues of the leading K×K block
    for (let k = 0; k < K; k++) {
      sh[k] = d[l + k];
      se[k] = k < K - 1 ? e2[l + k] : 0;
    }
    if (!ql(sh, se, K, tol2, false)) {
      sh.fill(wilkinson(d, e2, l));
    }
    const s0 = sh[0], s1 = sh[1], s2 = sh[2], s3 = sh[3];
    // sweep q is at step t − q·LAG at time t; the first and last (K−1)·LAG times go through step()
    const t0 = (K - 1) * LAG;
    for (let t = 0; t <= t0; t++) {
      for (let q = 0; q < K; q++) {
        const k = t - q * LAG;
        if (k === 0) start(d, m, sh[q], st, 4 * q);
        if (k >= 0) step(d, e2, m, k, sh[q], st, 4 * q);
      }
    }
    let c0 = st[0], z0 = st[1], g0 = st[2], p0 = st[3];
    let c1 = st[4], z1 = st[5], g1 = st[6], p1 = st[7];
    let c2 = st[8], z2 = st[9], g2 = st[10], p2 = st[11];
    let c3 = st[12], z3 = st[13], g3 = st[14], p3 = st[15];
    // all four sweeps in flight: the same step, written out once per sweep (rows j, j+2, j+4, j+6)
    for (let j = m - 1 - (t0 + 1); j + t0 >= l && j >= l; j--) {
      {
        const bb = e2[j], r = p0 + bb;
        e2[j + 1] = z0 * r;
        const oc = c0, og = g0, al = d[j];
        c0 = r !== 0 ? p0 / r : 1;
        z0 = r !== 0 ? bb / r : 0;
        g0 = c0 * (al - s0) - z0 * og;
        d[j + 1] = og + (al - g0);
        p0 = c0 !== 0 ? (g0 * g0) / c0 : oc * bb;
      }
      {
        const i = j + LAG, bb = e2[i], r = p1 + bb;
        e2[i + 1] = z1 * r;
        const oc = c1, og = g1, al = d[i];
        c1 = r !== 0 ? p1 / r : 1;
        z1 = r !== 0 ? bb / r : 0;
        g1 = c1 * (al - s1) - z1 * og;
        d[i + 1] = og + (al - g1);
        p1 = c1 !== 0 ? (g1 * g1) / c1 : oc * bb;
      }
      {
        const i = j + 2 * LAG, bb = e2[i], r = p2 + bb;
        e2[i + 1] = z2 * r;
        const oc = c2, og = g2, al = d[i];
        c2 = r !== 0 ? p2 / r : 1;
        z2 = r !== 0 ? bb / r : 0;
        g2 = c2 * (al - s2) - z2 * og;
        d[i + 1] = og + (al - g2);
        p2 = c2 !== 0 ? (g2 * g2) / c2 : oc * bb;
      }
      {
        const i = j + 3 * LAG, bb = e2[i], r = p3 + bb;
        e2[i + 1] = z3 * r;
        const oc = c3, og = g3, al = d[i];
        c3 = r !== 0 ? p3 / r : 1;
        z3 = r !== 0 ? bb / r : 0;
        g3 = c3 * (al - s3) - z3 * og;
        d[i + 1] = og + (al - g3);
        p3 = c3 !== 0 ? (g3 * g3) / c3 : oc * bb;
      }
    }
    st[0] = c0; st[1] = z0; st[2] = g0; st[3] = p0;
    st[4] = c1; st[5] = z1; st[6] = g1; st[7] = p1;
    st[8] = c2; st[9] = z2; st[10] = g2; st[11] = p2;
    st[12] = c3; st[13] = z3; st[14] = g3; st[15] = p3;
    for (let t = steps; t <= steps + t0; t++) {
      for (let q = 0; q < K; q++) {
        const k = t - q * LAG;
        if (k === steps) finish(d, e2, l, sh[q], st, 4 * q);
        else if (k < steps) step(d, e2, m, k, sh[q], st, 4 * q);
      }
    }
  }
  return true;
}

/**
 * Eigenvalues of the symmetric tridiagonal matrix with diagonal d (length n, overwritten by the
 * eigenvalues, unordered) and off-diagonal e[k] between k and k+1 (not modified). The matrix is
 * scaled by a power of two first so that squaring cannot overflow. Returns false if the iteration
 * did not converge (d is then undefined).
 */
export function symTridiagEigenvalues(d: Float64Array, e: Float64Array, n: number): boolean {
  if (n <= 0) return true;
  let anorm = 0;
  for (let i = 0; i < n; i++) anorm = Math.max(anorm, Math.abs(d[i]) + (i + 1 < n ? Math.abs(e[i]) : 0) + (i > 0 ? Math.abs(e[i - 1]) : 0));
  if (!Number.isFinite(anorm)) return false;
  if (anorm === 0) return true;
  const scale = 2 ** -Math.round(Math.log2(anorm));
  const e2 = new Float64Array(n);
  for (let i = 0; i < n; i++) d[i] *= scale;
  for (let i = 0; i + 1 < n; i++) {
    const x = e[i] * scale;
    e2[i] = x * x;
  }
  // an off-diagonal below 0.1·eps·‖T‖ moves no eigenvalue by more than that (common practice)
  const tol2 = (0.1 * EPS) ** 2;
  const ok = ql(d, e2, n, tol2, true);
  for (let i = 0; i < n; i++) d[i] /= scale;
  return ok;
}
