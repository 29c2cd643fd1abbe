/**
 * Dense blocks of 75 rows and more: Hessenberg QR with aggressive early deflation (Braman, Byers &
 * Mathias 2002) and block swapping in the real Schur form of the deflation window (Bai & Demmel 1993).
 * Checked against numpy.linalg.eigvals (values pasted below) and against ml-matrix's
 * EigenvalueDecomposition (the classical double-shift QR, an independent implementation), on hard cases
 * hidden by an orthogonal or a well-conditioned similarity so that no structure splits them.
 */
import { describe, expect, it } from 'vitest';
import { EigenvalueDecomposition, inverse } from 'ml-matrix';
import { dense, DenseMatrix, matMul } from '../server/src/core/numeric/dense';
import { eigenvalues } from '../server/src/core/numeric/eigen';
import { randomDense, rng, toMl, spectrumMismatch } from './helpers/matrices';

type C = { re: number; im: number };

/** Entries uniform in [−0.5, 0.5) from mulberry32 (the generator of bench/eigen.ts). */
function mulberry(n: number, seed: number): DenseMatrix {
  const a = dense(n, n);
  let s = seed >>> 0;
  for (let i = 0; i < n * n; i++) {
    s = (s + 0x6d2b79f5) >>> 0;
    let t = s;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    a.data[i] = ((t ^ (t >>> 14)) >>> 0) / 4294967296 - 0.5;
  }
  return a;
}

function values(a: DenseMatrix): C[] {
  const r = eigenvalues(a);
  expect(r.converged).toBe(true);
  return Array.from(r.re, (re, k) => ({ re, im: r.im[k] }));
}

function mlValues(a: DenseMatrix): C[] {
  const evd = new EigenvalueDecomposition(toMl(a));
  return evd.realEigenvalues.map((re, k) => ({ re, im: evd.imaginaryEigenvalues[k] }));
}

/** A random orthogonal n×n matrix: product of n Householder reflections of random vectors. */
function randomOrthogonal(n: number, rand: () => number): DenseMatrix {
  const q = dense(n, n);
  for (let i = 0; i < n; i++) q.data[i * n + i] = 1;
  const v = new Float64Array(n);
  for (let r = 0; r < n; r++) {
    let vv = 0;
    for (let i = 0; i < n; i++) (v[i] = rand() - 0.5), (vv += v[i] * v[i]);
    for (let i = 0; i < n; i++) {
      let s = 0;
      for (let j = 0; j < n; j++) s += q.data[i * n + j] * v[j];
      s = (2 * s) / vv;
      for (let j = 0; j < n; j++) q.data[i * n + j] -= s * v[j];
    }
  }
  return q;
}

function transpose(a: DenseMatrix): DenseMatrix {
  const t = dense(a.cols, a.rows);
  for (let i = 0; i < a.rows; i++) for (let j = 0; j < a.cols; j++) t.data[j * a.rows + i] = a.data[i * a.cols + j];
  return t;
}

/** Q·B·Qᵀ with a random orthogonal Q: dense, same eigenvalues, same conditioning. */
function hideOrthogonal(b: DenseMatrix, rand: () => number): DenseMatrix {
  const q = randomOrthogonal(b.rows, rand);
  return matMul(matMul(q, b), transpose(q));
}

/** Quasi-triangular B from 1×1 blocks (real) and 2×2 blocks [[a, b], [−b, a]] (a ± ib), upper part random. */
function quasiTriangular(blocks: ([number] | [number, number])[], rand: () => number, upper = 1): DenseMatrix {
  const n = blocks.reduce((s, b) => s + b.length, 0);
  const m = dense(n, n);
  let p = 0;
  for (const b of blocks) {
    if (b.length === 1) m.data[p * n + p] = b[0];
    else {
      m.data[p * n + p] = m.data[(p + 1) * n + p + 1] = b[0];
      m.data[p * n + p + 1] = b[1];
      m.data[(p + 1) * n + p] = -b[1];
    }
    for (let i = 0; i < p + b.length; i++) for (let j = p + b.length; j < n; j++) m.data[i * n + j] = upper * (rand() - 0.5);
    p += b.length;
  }
  return m;
}

function exact(blocks: ([number] | [number, number])[]): C[] {
  const out: C[] = [];
  for (const b of blocks) {
    if (b.length === 1) out.push({ re: b[0], im: 0 });
    else out.push({ re: b[0], im: b[1] }, { re: b[0], im: -b[1] });
  }
  return out;
}

describe('dense eigenvalues of 75 states and more (aggressive early deflation)', () => {
  // numpy.linalg.eigvals (NumPy 2.4.6, OpenBLAS LAPACK dgeev) of mulberry(n, seed) computed with python3 at
  // test-writing time (the generator re-implemented in Python, checked entry by entry), sorted by real
  // then imaginary part, printed with 15 significant digits.
  const numpy: [number, number, number[][]][] = [
    [90, 11, [[-2.5482844883483, 0], [-2.46303485269245, -1.05124829919472], [-2.46303485269245, 1.05124829919472], [-2.29986947097261, -0.102120764376808], [-2.29986947097261, 0.102120764376808], [-2.04301594214494, -0.942355372679352], [-2.04301594214494, 0.942355372679352], [-2.0193857832856, -1.41658923164158], [-2.0193857832856, 1.41658923164158], [-1.80001168815723, -0.102076904238656], [-1.80001168815723, 0.102076904238656], [-1.78126064390991, -0.359012295709731], [-1.78126064390991, 0.359012295709731], [-1.46237082990555, -1.83629021274431], [-1.46237082990555, 1.83629021274431], [-1.42127415722515, -0.982505464380025], [-1.42127415722515, 0.982505464380025], [-1.35627824208422, -2.14853111052383], [-1.35627824208422, 2.14853111052383], [-1.25029879775335, -0.315616065071967], [-1.25029879775335, 0.315616065071967], [-1.15392447765323, -1.35125311272147], [-1.15392447765323, 1.35125311272147], [-0.889284012662047, -2.20488060867291], [-0.889284012662047, 2.20488060867291], [-0.86639815422775, -0.465547688237835], [-0.86639815422775, 0.465547688237835], [-0.840817594859541, -1.02132651486935], [-0.840817594859541, 1.02132651486935], [-0.808545408156213, 0], [-0.763958812775235, -1.41212692009965], [-0.763958812775235, 1.41212692009965], [-0.389268853558688, -1.89478999637686], [-0.389268853558688, 1.89478999637686], [-0.371166105496403, 0], [-0.353698161132993, -2.07529802590639], [-0.353698161132993, 2.07529802590639], [-0.33548880611382, -0.284390144795967], [-0.33548880611382, 0.284390144795967], [-0.0558921971243674, -1.32432990398613], [-0.0558921971243674, 1.32432990398613], [0.13377029689016, -2.75334274141131], [0.13377029689016, 2.75334274141131], [0.180767007288783, -1.30930019543763], [0.180767007288783, 1.30930019543763], [0.206465155791277, -0.360990477984211], [0.206465155791277, 0.360990477984211], [0.22803558919168, -0.700722255207234], [0.22803558919168, 0.700722255207234], [0.234873631189002, -1.79721526077113], [0.234873631189002, 1.79721526077113], [0.350158320975857, -2.61599274558238], [0.350158320975857, 2.61599274558238], [0.407354851210581, -2.19678254917204], [0.407354851210581, 2.19678254917204], [0.461076646540194, -1.37198982111809], [0.461076646540194, 1.37198982111809], [0.677853594627101, -0.202698700962772], [0.677853594627101, 0.202698700962772], [0.808587424899414, -1.12602102750277], [0.808587424899414, 1.12602102750277], [0.826622909865024, -0.678817921961642], [0.826622909865024, 0.678817921961642], [0.962193989718274, 0], [1.03497851932468, -2.08869162172621], [1.03497851932468, 2.08869162172621], [1.04412328065737, -0.412389319661211], [1.04412328065737, 0.412389319661211], [1.10655045025703, -1.52090540212198], [1.10655045025703, 1.52090540212198], [1.28751689762691, -0.967783982820142], [1.28751689762691, 0.967783982820142], [1.45125460345952, -1.75968754392333], [1.45125460345952, 1.75968754392333], [1.587525248827, -0.292990397620632], [1.587525248827, 0.292990397620632], [1.61773340674815, -1.37457327797169], [1.61773340674815, 1.37457327797169], [1.79292237108476, -0.881200101276588], [1.79292237108476, 0.881200101276588], [1.91239958189894, -0.129535844243487], [1.91239958189894, 0.129535844243487], [2.08676450295775, -1.65634394734667], [2.08676450295775, 1.65634394734667], [2.22721614009577, -0.690400234195772], [2.22721614009577, 0.690400234195772], [2.44253247829048, -1.19521704260185], [2.44253247829048, 1.19521704260185], [2.62629777480977, 0], [3.13170354820899, 0]]],
    [160, 12, [[-3.66038028885035, 0], [-3.43956310679654, -0.846665131821791], [-3.43956310679654, 0.846665131821791], [-3.20461952416603, -0.558625390867071], [-3.20461952416603, 0.558625390867071], [-3.10404618111719, 0], [-3.10205658777842, -0.107330650243936], [-3.10205658777842, 0.107330650243936], [-2.84717263323814, -1.33756709532005], [-2.84717263323814, 1.33756709532005], [-2.76425642621825, -2.63005556399947], [-2.76425642621825, 2.63005556399947], [-2.75735929284442, 0], [-2.66104024679903, -1.82915710398305], [-2.66104024679903, 1.82915710398305], [-2.63405258243526, -0.47415259427268], [-2.63405258243526, 0.47415259427268], [-2.49501288799459, -1.37023095495961], [-2.49501288799459, 1.37023095495961], [-2.2171950496929, 0], [-2.19450299726373, -1.5709055971387], [-2.19450299726373, 1.5709055971387], [-2.14786534937972, -2.34383159261851], [-2.14786534937972, 2.34383159261851], [-2.03015516383976, -0.900513375746755], [-2.03015516383976, 0.900513375746755], [-1.98465572107272, 0], [-1.96565986372046, -0.774127722594995], [-1.96565986372046, 0.774127722594995], [-1.93313373969637, -1.6133489228005], [-1.93313373969637, 1.6133489228005], [-1.85458530549691, -2.04140500418409], [-1.85458530549691, 2.04140500418409], [-1.77171789977597, -1.36390669239093], [-1.77171789977597, 1.36390669239093], [-1.65350205967863, 0], [-1.57094638165932, -3.0630051666697], [-1.57094638165932, 3.0630051666697], [-1.5432309018384, -1.81747340196631], [-1.5432309018384, 1.81747340196631], [-1.52919100153151, -2.76082085101978], [-1.52919100153151, 2.76082085101978], [-1.42563223334137, -0.95375503632936], [-1.42563223334137, 0.95375503632936], [-1.32264146180063, -0.463624360048496], [-1.32264146180063, 0.463624360048496], [-1.28598247635075, -3.01955326248805], [-1.28598247635075, 3.01955326248805], [-1.23249682600558, -1.23032981422385], [-1.23249682600558, 1.23032981422385], [-1.08942571524181, -2.35040148622009], [-1.08942571524181, 2.35040148622009], [-0.876631149425468, -3.07997330875899], [-0.876631149425468, 3.07997330875899], [-0.811357329061492, -1.84460416728015], [-0.811357329061492, 1.84460416728015], [-0.809853993997152, -0.375714404747203], [-0.809853993997152, 0.375714404747203], [-0.778394790978465, -2.65235161399886], [-0.778394790978465, 2.65235161399886], [-0.691194541613056, -3.50611596577201], [-0.691194541613056, 3.50611596577201], [-0.656133577170745, 0], [-0.459960150462311, -3.55604674277794], [-0.459960150462311, 3.55604674277794], [-0.438871802188251, -1.65894337276557], [-0.438871802188251, 1.65894337276557], [-0.428383757201117, -1.10825752352448], [-0.428383757201117, 1.10825752352448], [-0.322453253853515, -1.52006576842571], [-0.322453253853515, 1.52006576842571], [-0.276820371246001, 0], [-0.263015209874887, -0.413955360117124], [-0.263015209874887, 0.413955360117124], [-0.244044221351973, -2.60191066181944], [-0.244044221351973, 2.60191066181944], [-0.136037559616102, -2.42721697738016], [-0.136037559616102, 2.42721697738016], [-0.0165061932334666, -1.13189031634438], [-0.0165061932334666, 1.13189031634438], [0.0915057659082616, -2.00267175523021], [0.0915057659082616, 2.00267175523021], [0.0958592120977455, -0.744297352332976], [0.0958592120977455, 0.744297352332976], [0.125973423929613, -2.50478233453953], [0.125973423929613, 2.50478233453953], [0.170854143439815, 0], [0.207873085178605, -1.42379816971605], [0.207873085178605, 1.42379816971605], [0.260548246739284, -2.60723975362062], [0.260548246739284, 2.60723975362062], [0.413863947186736, -0.791101065418137], [0.413863947186736, 0.791101065418137], [0.430715655378642, 0], [0.456296221991096, -0.368995765426304], [0.456296221991096, 0.368995765426304], [0.472786318763386, -3.37483295309579], [0.472786318763386, 3.37483295309579], [0.643521142342782, -2.23706778894717], [0.643521142342782, 2.23706778894717], [0.653022061989713, -3.07201020101379], [0.653022061989713, 3.07201020101379], [0.681632157447273, -2.56606471876939], [0.681632157447273, 2.56606471876939], [0.887019771364693, -0.290830677707004], [0.887019771364693, 0.290830677707004], [1.00258814287885, -1.34536547954265], [1.00258814287885, 1.34536547954265], [1.08810861775145, 0], [1.10543279109215, -1.79556750602582], [1.10543279109215, 1.79556750602582], [1.12415889217439, -2.74185714483756], [1.12415889217439, 2.74185714483756], [1.35521532428789, 0], [1.36716856706498, -2.56080727097968], [1.36716856706498, 2.56080727097968], [1.37103732497396, -0.698872361798682], [1.37103732497396, 0.698872361798682], [1.4094096528704, -1.8907406935651], [1.4094096528704, 1.8907406935651], [1.69228967096293, -0.888099256093148], [1.69228967096293, 0.888099256093148], [1.70870728489697, -1.93500746717269], [1.70870728489697, 1.93500746717269], [1.79090655001696, -2.97070039881294], [1.79090655001696, 2.97070039881294], [1.81908263369004, -0.060810286348654], [1.81908263369004, 0.060810286348654], [1.92616284385167, -1.26238915436797], [1.92616284385167, 1.26238915436797], [1.99974042425787, 0], [2.04637816177605, -2.47003943585001], [2.04637816177605, 2.47003943585001], [2.0563480677741, -1.73026736144487], [2.0563480677741, 1.73026736144487], [2.12984853459765, -2.13583460428504], [2.12984853459765, 2.13583460428504], [2.13764130726224, -0.573334729022401], [2.13764130726224, 0.573334729022401], [2.24456626715083, -0.875992225617238], [2.24456626715083, 0.875992225617238], [2.40542522099709, 0], [2.43477427163765, -1.42560319763664], [2.43477427163765, 1.42560319763664], [2.60248320751138, -2.51007457291643], [2.60248320751138, 2.51007457291643], [2.74127589030723, -1.23014616116519], [2.74127589030723, 1.23014616116519], [2.76664247501472, -0.364813186104764], [2.76664247501472, 0.364813186104764], [2.96353623643618, -1.89952730781622], [2.96353623643618, 1.89952730781622], [2.9965391706333, -0.803990428320877], [2.9965391706333, 0.803990428320877], [2.99689265107163, 0], [3.07730884756421, -1.38171211788556], [3.07730884756421, 1.38171211788556], [3.53497109096861, -0.539543609237749], [3.53497109096861, 0.539543609237749], [3.79554119502524, 0]]],
  ];
  for (const [n, seed, ref] of numpy) {
    it(`random ${n}×${n} (seed ${seed}) equals numpy.linalg.eigvals and ml-matrix`, () => {
      const a = mulberry(n, seed);
      const got = values(a);
      expect(spectrumMismatch(got, ref.map(([re, im]) => ({ re, im })))).toBeLessThan(1e-11);
      expect(spectrumMismatch(got, mlValues(a))).toBeLessThan(1e-11);
    });
  }

  it('random dense 200–400 agree with ml-matrix; trace = Σλ', () => {
    const rand = rng(41);
    for (const n of [200, 400]) {
      const a = randomDense(n, n, rand);
      const got = values(a);
      expect(spectrumMismatch(got, mlValues(a))).toBeLessThan(1e-10);
      let tr = 0;
      for (let i = 0; i < n; i++) tr += a.data[i * n + i];
      expect(Math.abs(got.reduce((s, g) => s + g.re, 0) - tr)).toBeLessThan(1e-10 * n);
      expect(Math.abs(got.reduce((s, g) => s + g.im, 0))).toBeLessThan(1e-10 * n);
    }
  });

  it('repeated eigenvalues, complex pairs and a zero block hidden by an orthogonal similarity (normal: exact to 1e-10)', () => {
    const rand = rng(42);
    const blocks: ([number] | [number, number])[] = [];
    for (let k = 0; k < 30; k++) blocks.push([1]); // 1 thirty times
    for (let k = 0; k < 20; k++) blocks.push([-2]); // −2 twenty times
    for (let k = 0; k < 15; k++) blocks.push([0.5, 3]); // 0.5 ± 3i fifteen times
    for (let k = 0; k < 20; k++) blocks.push([0]); // a zero block of 20
    for (let k = 0; k < 20; k++) blocks.push([-0.1 * k, 1 + 0.2 * k]); // distinct pairs
    const a = hideOrthogonal(quasiTriangular(blocks, rand, 0), rand); // upper part 0: normal matrix
    expect(spectrumMismatch(values(a), exact(blocks))).toBeLessThan(1e-10);
  });

  it('defective Jordan blocks (non-normal): errors of order sqrt(eps) as theory says, equal to ml-matrix to the same order', () => {
    const rand = rng(43);
    const n = 120;
    // Jordan blocks of size 2 at −1 (20 of them), size 3 at 2 (10), the rest distinct reals
    const j = dense(n, n);
    const ex: C[] = [];
    let p = 0;
    for (let k = 0; k < 20; k++, p += 2) {
      j.data[p * n + p] = j.data[(p + 1) * n + p + 1] = -1;
      j.data[p * n + p + 1] = 1;
      ex.push({ re: -1, im: 0 }, { re: -1, im: 0 });
    }
    for (let k = 0; k < 10; k++, p += 3) {
      for (let t = 0; t < 3; t++) j.data[(p + t) * n + p + t] = 2;
      j.data[p * n + p + 1] = j.data[(p + 1) * n + p + 2] = 1;
      ex.push({ re: 2, im: 0 }, { re: 2, im: 0 }, { re: 2, im: 0 });
    }
    for (; p < n; p++) {
      j.data[p * n + p] = 5 + p / 10;
      ex.push({ re: 5 + p / 10, im: 0 });
    }
    const a = hideOrthogonal(j, rand);
    const got = values(a);
    // a Jordan block of size k perturbed by ε moves its eigenvalues by about ε^(1/k): 1e-16^(1/3) ≈ 5e-6
    expect(spectrumMismatch(got, ex)).toBeLessThan(1e-4);
    // the sums over each cluster are far more accurate than the single values (first-order perturbations cancel)
    const sumNear = (c: number): number => got.filter((g) => Math.abs(g.re - c) < 0.01).reduce((s, g) => s + g.re, 0);
    expect(Math.abs(sumNear(-1) - -40)).toBeLessThan(1e-8);
    expect(Math.abs(sumNear(2) - 60)).toBeLessThan(1e-8);
    expect(spectrumMismatch(got, mlValues(a))).toBeLessThan(1e-4);
  });

  it('widely scaled rows and columns (diagonal similarity 2^±30): same eigenvalues as the unscaled matrix', () => {
    const rand = rng(44);
    const n = 150;
    const a = randomDense(n, n, rand);
    const b = dense(n, n);
    const d = Array.from({ length: n }, (_, i) => 2 ** Math.round(60 * (i / (n - 1)) - 30));
    for (let i = 0; i < n; i++) for (let jj = 0; jj < n; jj++) b.data[i * n + jj] = (d[i] * a.data[i * n + jj]) / d[jj];
    expect(spectrumMismatch(values(b), values(a))).toBeLessThan(1e-10);
    expect(spectrumMismatch(values(a), mlValues(a))).toBeLessThan(1e-10);
  });

  it('huge and tiny magnitudes: 1e150·A and 1e-150·A scale the eigenvalues exactly', () => {
    const rand = rng(45);
    const n = 100;
    const a = randomDense(n, n, rand);
    const base = values(a);
    for (const f of [1e150, 1e-150]) {
      const b = dense(n, n);
      for (let i = 0; i < n * n; i++) b.data[i] = a.data[i] * f;
      const got = values(b).map((g) => ({ re: g.re / f, im: g.im / f }));
      expect(spectrumMismatch(got, base)).toBeLessThan(1e-10);
    }
  });

  it('a well-conditioned (non-orthogonal) similarity of a quasi-triangular matrix with 40 complex pairs', () => {
    const rand = rng(46);
    const blocks: ([number] | [number, number])[] = [];
    for (let k = 0; k < 40; k++) blocks.push([-1 + 0.05 * k, 2 + 0.01 * k]);
    for (let k = 0; k < 20; k++) blocks.push([3 - 0.05 * k]);
    const b = quasiTriangular(blocks, rand, 0.05);
    const n = b.rows;
    const t = randomDense(n, n, rand);
    for (let i = 0; i < n; i++) t.data[i * n + i] += 3 * Math.sqrt(n);
    const a = matMul(matMul(t, b), dense(n, n, inverse(toMl(t)).to2DArray()));
    expect(spectrumMismatch(values(a), exact(blocks))).toBeLessThan(1e-8);
  });
});
