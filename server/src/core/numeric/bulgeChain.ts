/**
 * Multishift QR sweep as a chain of small bulges (Braman, Byers & Mathias, "The multishift QR algorithm.
 * Part I: Maintaining well-focused shifts and level 3 performance", SIAM J. Matrix Anal. Appl. 23, 2002),
 * eigenvalue-only: nothing outside rows/columns l..en of the Hessenberg matrix is updated.
 *
 * Each shift pair gives one 3×3 bulge (Francis' double shift, with EISPACK hqr's arithmetic for each
 * reflector); the bulges are introduced one after another at the top and chased down together, three
 * rows apart, the one in front first at each step. That is the same as the consecutive double-shift
 * sweeps up to the order in which commuting left and right reflections meet an entry.
 *
 * The chain is chased in slabs of `slab` steps. A slab's reflections change only rows/columns in a
 * diagonal window [wlo, whi]; inside the window they are applied at once, while the rows above the
 * window (right reflections only) and the columns right of it (left reflections only) get them
 * afterwards, replayed in order one row segment / column segment at a time while that segment is in
 * cache — BBM's delayed off-window updates, here as replayed reflections instead of a product with the
 * accumulated orthogonal matrix, so no extra flops. Every entry outside the window sees the same
 * operations in the same order as when they are applied at once.
 */

/** Scratch of the reflections recorded in one slab. */
interface Record {
  k: Int32Array;
  /** x, y, z, q, r of each reflection (hqr's notation), five per entry */
  c: Float64Array;
  last: Uint8Array;
}

/**
 * Chases one bulge per shift pair [sum, prod] (the pair's roots are the double shift) down rows l..en
 * of h (nn×nn, row-major, upper Hessenberg on l..en; eigenvalue-only updates).
 */
export function bulgeChainSweep(h: Float64Array, nn: number, l: number, en: number, pairs: [number, number][], slab = 0): void {
  const nb = pairs.length;
  if (nb === 0 || en - l < 2) return;
  if (slab <= 0) slab = Math.max(12, 3 * nb);
  // entries below the subdiagonal left over from earlier sweeps
  for (let i = l + 2; i <= en; i++) {
    h[i * nn + i - 2] = 0;
    if (i > l + 2) h[i * nn + i - 3] = 0;
  }
  const alive = new Uint8Array(nb).fill(1);
  const cap = nb * slab;
  const rec: Record = { k: new Int32Array(cap), c: new Float64Array(5 * cap), last: new Uint8Array(cap) };
  const tEnd = en - l + 3 * (nb - 1); // steps: bulge b is at row l + t − 3b at step t, for l ≤ row ≤ en − 1
  for (let t0 = 0; t0 < tEnd; t0 += slab) {
    const t1 = Math.min(tEnd, t0 + slab);
    const wlo = Math.max(l, l + t0 - 3 * (nb - 1));
    const whi = Math.min(en, l + t1 - 1 + 3);
    let nrec = 0;
    for (let t = t0; t < t1; t++) {
      for (let b = 0; b < nb; b++) {
        const k = l + t - 3 * b;
        if (k < l || k > en - 1 || !alive[b]) continue;
        const notlast = k !== en - 1;
        let p: number, q: number, r: number, x: number;
        if (k === l) {
          // hqr's scaled first column of (H − σ₁)(H − σ₂) with σ₁ + σ₂ = sum, σ₁σ₂ = prod
          const sum = pairs[b][0], prod = pairs[b][1];
          const xx = sum / 2;
          const w = xx * xx - prod;
          const z = h[l * nn + l];
          const rr = xx - z;
          const ss = xx - z;
          p = (rr * ss - w) / h[(l + 1) * nn + l] + h[l * nn + l + 1];
          q = h[(l + 1) * nn + l + 1] - z - rr - ss;
          r = h[(l + 2) * nn + l + 1];
          const s = Math.abs(p) + Math.abs(q) + Math.abs(r);
          if (!(s > 0) || !Number.isFinite(s)) {
            alive[b] = 0;
            continue;
          }
          p /= s;
          q /= s;
          r /= s;
          x = 0;
        } else {
          p = h[k * nn + k - 1];
          q = h[(k + 1) * nn + k - 1];
          r = notlast ? h[(k + 2) * nn + k - 1] : 0;
          x = Math.abs(p) + Math.abs(q) + Math.abs(r);
          if (x === 0) continue;
          p /= x;
          q /= x;
          r /= x;
        }
        let s = Math.sqrt(p * p + q * q + r * r);
        if (p < 0) s = -s;
        if (s === 0) continue;
        if (k !== l) {
          h[k * nn + k - 1] = -s * x;
          // the bulge below is now zero (the next bulge up reads this column)
          h[(k + 1) * nn + k - 1] = 0;
          if (notlast) h[(k + 2) * nn + k - 1] = 0;
        }
        p += s;
        const vx = p / s, vy = q / s, vz = r / s;
        q /= p;
        r /= p;
        // left reflection on columns k..whi, right reflection on rows wlo..k+3 (the rest is replayed after the slab)
        const iend = Math.min(en, k + 3);
        if (notlast) {
          left3(h, nn, k, k, whi, vx, vy, vz, q, r);
          right3(h, nn, k, wlo, iend, vx, vy, vz, q, r);
        } else {
          left2(h, nn, k, k, whi, vx, vy, q);
          right2(h, nn, k, wlo, iend, vx, vy, q);
        }
        rec.k[nrec] = k;
        rec.last[nrec] = notlast ? 0 : 1;
        const c = 5 * nrec;
        rec.c[c] = vx;
        rec.c[c + 1] = vy;
        rec.c[c + 2] = vz;
        rec.c[c + 3] = q;
        rec.c[c + 4] = r;
        nrec++;
      }
    }
    if (nrec === 0) continue;
    replayRight(h, nn, l, wlo, rec, nrec);
    replayLeft(h, nn, en, whi, rec, nrec);
  }
}

/** Reflection (hqr's x, y, z, q, r) from the left on rows k..k+2, columns j0..j1. */
function left3(h: Float64Array, nn: number, k: number, j0: number, j1: number, vx: number, vy: number, vz: number, q: number, r: number): void {
  const r0 = k * nn, r1 = r0 + nn, r2 = r1 + nn;
  for (let j = j0; j <= j1; j++) {
    const tt = h[r0 + j] + q * h[r1 + j] + r * h[r2 + j];
    h[r0 + j] -= tt * vx;
    h[r1 + j] -= tt * vy;
    h[r2 + j] -= tt * vz;
  }
}

/** The last, 2×2 reflection from the left on rows k, k+1, columns j0..j1. */
function left2(h: Float64Array, nn: number, k: number, j0: number, j1: number, vx: number, vy: number, q: number): void {
  const r0 = k * nn, r1 = r0 + nn;
  for (let j = j0; j <= j1; j++) {
    const tt = h[r0 + j] + q * h[r1 + j];
    h[r0 + j] -= tt * vx;
    h[r1 + j] -= tt * vy;
  }
}

/** Reflection from the right on columns k..k+2, rows i0..i1. */
function right3(h: Float64Array, nn: number, k: number, i0: number, i1: number, vx: number, vy: number, vz: number, q: number, r: number): void {
  for (let i = i0, o = i0 * nn + k; i <= i1; i++, o += nn) {
    const tt = vx * h[o] + vy * h[o + 1] + vz * h[o + 2];
    h[o] -= tt;
    h[o + 1] -= tt * q;
    h[o + 2] -= tt * r;
  }
}

/** The last, 2×2 reflection from the right on columns k, k+1, rows i0..i1. */
function right2(h: Float64Array, nn: number, k: number, i0: number, i1: number, vx: number, vy: number, q: number): void {
  for (let i = i0, o = i0 * nn + k; i <= i1; i++, o += nn) {
    const tt = vx * h[o] + vy * h[o + 1];
    h[o] -= tt;
    h[o + 1] -= tt * q;
  }
}

/** Rows (right replay) and columns (left replay) taken together, so that each recorded reflection is loaded once per block. */
const RB = 16;
const CB = 32;

/** Right reflections of the slab on rows l..wlo−1, columns wlo..whi, a block of rows at a time. */
function replayRight(h: Float64Array, nn: number, l: number, wlo: number, rec: Record, nrec: number): void {
  const ks = rec.k, cs = rec.c, last = rec.last;
  for (let i0 = l; i0 < wlo; i0 += RB) {
    const i1 = Math.min(wlo, i0 + RB);
    const oEnd = i1 * nn;
    for (let e = 0; e < nrec; e++) {
      const c = 5 * e;
      const vx = cs[c], vy = cs[c + 1], q = cs[c + 3];
      const k = ks[e];
      if (last[e] === 0) {
        const vz = cs[c + 2], r = cs[c + 4];
        for (let o = i0 * nn + k; o < oEnd; o += nn) {
          const tt = vx * h[o] + vy * h[o + 1] + vz * h[o + 2];
          h[o] -= tt;
          h[o + 1] -= tt * q;
          h[o + 2] -= tt * r;
        }
      } else {
        for (let o = i0 * nn + k; o < oEnd; o += nn) {
          const tt = vx * h[o] + vy * h[o + 1];
          h[o] -= tt;
          h[o + 1] -= tt * q;
        }
      }
    }
  }
}

/** Left reflections of the slab on rows wlo..whi, columns whi+1..en, a block of columns at a time. */
function replayLeft(h: Float64Array, nn: number, en: number, whi: number, rec: Record, nrec: number): void {
  const ks = rec.k, cs = rec.c, last = rec.last;
  for (let j0 = whi + 1; j0 <= en; j0 += CB) {
    const j1 = Math.min(en + 1, j0 + CB);
    for (let e = 0; e < nrec; e++) {
      const c = 5 * e;
      const vx = cs[c], vy = cs[c + 1], q = cs[c + 3];
      const r0 = ks[e] * nn, r1 = r0 + nn, r2 = r1 + nn;
      if (last[e] === 0) {
        const vz = cs[c + 2], r = cs[c + 4];
        for (let j = j0; j < j1; j++) {
          const tt = h[r0 + j] + q * h[r1 + j] + r * h[r2 + j];
          h[r0 + j] -= tt * vx;
          h[r1 + j] -= tt * vy;
          h[r2 + j] -= tt * vz;
        }
      } else {
        for (let j = j0; j < j1; j++) {
          const tt = h[r0 + j] + q * h[r1 + j];
          h[r0 + j] -= tt * vx;
          h[r1 + j] -= tt * vy;
        }
      }
    }
  }
}
