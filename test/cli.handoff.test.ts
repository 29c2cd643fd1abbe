/**
 * `poise sample` and `poise reduce` end to end: the exports read back by Python and checked against
 * SciPy (`scipy.signal.cont2discrete` on the matrices `poise linearize --format numpy` writes, and the
 * Hankel singular values from `scipy.linalg.solve_continuous_lyapunov`), the sample time with a unit, and
 * the usage errors. The numeric kernels have their own tests (sampled.test.ts, reduce.test.ts).
 */
import { beforeAll, describe, expect, it } from 'vitest';
import * as path from 'path';
import { ensureBuilt, EXAMPLES, runCli, runCliAsync } from './helpers/cli';
import { readReferenceFile, referenceModels } from './helpers/reference';
import { PYTHON_WITH_SCIPY, runScipy, SCIPY_REQUIRED } from './helpers/scipy';

beforeAll(() => ensureBuilt(), 300_000);

const needScipy = !PYTHON_WITH_SCIPY && !SCIPY_REQUIRED;

describe('poise sample: the NumPy export against scipy.signal.cont2discrete', () => {
  if (needScipy) {
    it.skip('needs python3 with numpy and scipy', () => {});
    return;
  }
  const METHODS = [['zoh', 'zoh'], ['foh', 'foh'], ['tustin', 'bilinear']] as const;
  it('every shared reference model, every method, to 1e-12 relative', async () => {
    const jobs: { name: string; hold: string; meth: string; lin: Promise<{ stdout: string; code: number | null }>; smp: Promise<{ stdout: string; code: number | null }>; T: number }[] = [];
    for (const ref of referenceModels()) {
      // a sample time of a fifth of the fastest time scale, from the reference eigenvalues (../shared/reference)
      const eig = readReferenceFile(ref.ref).eig as unknown as [number, number][];
      const rho = Math.max(...eig.map(([re, im]) => Math.hypot(re, im)));
      const T = rho > 0 ? 0.2 / rho : 1;
      const lin = runCliAsync(['linearize', ref.file, '--format', 'numpy']);
      for (const [hold, meth] of METHODS) jobs.push({ name: ref.name, hold, meth, T, lin, smp: runCliAsync(['sample', ref.file, '--every', String(T), '--hold', hold, '--format', 'numpy']) });
    }
    const input = [];
    for (const j of jobs) {
      const [l, s] = await Promise.all([j.lin, j.smp]);
      expect(l.code, `${j.name} linearize`).toBe(0);
      expect(s.code, `${j.name} sample ${j.hold}`).toBe(0);
      input.push({ name: j.name, meth: j.meth, lin: l.stdout, smp: s.stdout });
    }
    const res = runScipy<{ name: string; meth: string; T: number; hold: string; err: number }[]>(
      `out = []
for c in inp:
    L = {}; S = {}
    exec(c['lin'], L); exec(c['smp'], S)
    A, B, C, D = L['A'], L['B'], L['C'], L['D']
    if C.shape[0] == 0:  # a model without outputs: its states stand in for them
        C = np.eye(A.shape[0]); D = np.zeros((A.shape[0], B.shape[1]))
    ref = scipy.signal.cont2discrete((A, B, C, D), S['sample_time'], method=c['meth'])[:4]
    err = 0.0
    for ours, theirs in zip((S['A'], S['B'], S['C'], S['D']), ref):
        if theirs.size:
            err = max(err, float(np.max(np.abs(ours - theirs)) / max(np.max(np.abs(theirs)), 1e-300)))
    out.append({'name': c['name'], 'meth': c['meth'], 'T': S['sample_time'], 'hold': S['hold'], 'err': err})
print(json.dumps(out))`,
      input,
    );
    expect(res.length).toBe(jobs.length);
    res.forEach((r, k) => {
      expect(r.hold, r.name).toBe(jobs[k].hold); // the export carries the method …
      expect(r.T, r.name).toBe(jobs[k].T); // … and T, exactly
      expect(r.err, `${r.name} ${r.meth}`).toBeLessThan(1e-12);
    });
  }, 120_000);
});

describe('poise sample: options', () => {
  const tank = path.join(EXAMPLES, 'buffer_tank.poise');
  it('a sample time with a unit equals the same time in the model unit; JSON carries T, the hold and the delay', () => {
    const a = runCli(['sample', tank, '--point', 'dry_day', '--every', '0.5[min]', '--delay', '25%', '--format', 'json']);
    const b = runCli(['sample', tank, '--point', 'dry_day', '--every', '30', '--delay', '0.25', '--format', 'json']);
    expect(a.code, a.stderr).toBe(0);
    const ja = JSON.parse(a.stdout), jb = JSON.parse(b.stdout);
    expect(ja.schema).toBe('poise-sampled/1');
    expect(ja.sampleTime.unit).toBe('s');
    expect(ja.sampleTime.value).toBeCloseTo(30, 12);
    expect(ja.delayFraction).toBe(0.25);
    expect(ja.states[ja.states.length - 1]).toMatch(/@prev$/);
    expect(ja.A).toEqual(jb.A);
    expect(ja.verdict).toBe('stable');
    // each continuous eigenvalue s maps to z = e^{sT} under a hold (Franklin, Powell & Workman, ch. 4)
    for (const p of ja.poles) if (p.s) expect(Math.hypot(p.z.re - Math.exp(p.s.re * 30) * Math.cos(p.s.im * 30), p.z.im - Math.exp(p.s.re * 30) * Math.sin(p.s.im * 30))).toBeLessThan(1e-12);
  });
  it('text shows the mapping and the verdict; every export format names T', () => {
    const t = runCli(['sample', tank, '--point', 'dry_day', '--every', '30', '--hold', 'foh']);
    expect(t.code, t.stderr).toBe(0);
    expect(t.stdout).toMatch(/first-order \(triangle\) hold, sample time T = 30 s/);
    expect(t.stdout).toMatch(/from s = -/);
    expect(t.stdout).toMatch(/Verdict: stable: every pole inside the unit circle/);
    for (const f of ['csv', 'markdown', 'latex', 'numpy']) {
      const r = runCli(['sample', tank, '--point', 'dry_day', '--every', '30', '--format', f]);
      expect(r.code, `${f}: ${r.stderr}`).toBe(0);
      expect(r.stdout, f).toMatch(/30/);
      expect(r.stdout, f).toMatch(/zoh|zero-order hold/);
    }
  });
  it('usage errors', () => {
    expect(runCli(['sample', tank]).stderr).toMatch(/needs the sample time: --every T/);
    expect(runCli(['sample', tank, '--point', 'dry_day', '--every', '30', '--hold', 'tustin', '--delay', '0.3']).stderr).toMatch(/--delay works with --hold zoh only/);
    expect(runCli(['sample', tank, '--point', 'dry_day', '--every', '30', '--delay', '1.2']).code).toBe(2);
    expect(runCli(['sample', tank, '--point', 'dry_day', '--every', '2[m]']).stderr).toMatch(/not a time unit/);
    expect(runCli(['sample', tank, '--point', 'dry_day', '--every', '-1']).code).toBe(2);
    expect(runCli(['reduce', tank, '--point', 'dry_day', '--order', '1', '--within', '1e-3']).stderr).toMatch(/not both/);
  });
});

describe('poise reduce: Hankel singular values against SciPy', () => {
  if (needScipy) {
    it.skip('needs python3 with numpy and scipy', () => {});
    return;
  }
  it('every shared reference model: σ from the NumPy export of the full model, the bound and the order', async () => {
    const models = referenceModels();
    const runs = await Promise.all(models.map((m) => Promise.all([runCliAsync(['linearize', m.file, '--format', 'numpy']), runCliAsync(['reduce', m.file, '--format', 'json'])])));
    const input: { lin: string }[] = [];
    const ours: { hankel: number[]; bound: number; kept: number; unstable: number; suggested: number; tolerance: number }[] = [];
    runs.forEach(([l, r], k) => {
      expect(l.code, models[k].name).toBe(0);
      if (r.code !== 0) {
        // a model with an eigenvalue on the axis (the centre of "fishery") cannot be split: a clear message
        expect(r.stderr, models[k].name).toMatch(/balanced truncation failed/);
        return;
      }
      input.push({ lin: l.stdout });
      ours.push(JSON.parse(r.stdout));
    });
    expect(ours.length).toBeGreaterThanOrEqual(4);
    // computed with python3: Hankel singular values σ = √eig(P·Q) of the stable part, P and Q from
    // scipy.linalg.solve_continuous_lyapunov (a model with unstable modes is skipped here: its stable part
    // needs the split that only Poise does)
    const ref = runScipy<(number[] | null)[]>(
      `out = []
for c in inp:
    L = {}; exec(c['lin'], L)
    A, B, C = L['A'], L['B'], L['C']
    if C.shape[0] == 0: C = np.eye(A.shape[0])
    if np.max(np.linalg.eigvals(A).real) >= 0: out.append(None); continue
    P = scipy.linalg.solve_continuous_lyapunov(A, -B @ B.T); Q = scipy.linalg.solve_continuous_lyapunov(A.T, -C.T @ C)
    out.append(sorted(np.sqrt(np.abs(np.linalg.eigvals(P @ Q).real)).tolist(), reverse=True))
print(json.dumps(out))`,
      input,
    );
    let compared = 0;
    ours.forEach((o, k) => {
      const total = o.hankel.reduce((s, x) => s + x, 0);
      // the a-priori bound is twice the discarded tail (Glover 1984)
      expect(o.bound).toBeCloseTo(2 * o.hankel.slice(o.kept).reduce((s, x) => s + x, 0), 12);
      if (o.hankel.length) expect(o.bound).toBeLessThanOrEqual(o.tolerance * o.hankel[0] + 1e-15 * total);
      const r = ref[k];
      if (!r || o.unstable) return; // a centre (fishery) is on the axis: Poise keeps it whole, SciPy's Gramian is meaningless
      compared++;
      for (let i = 0; i < r.length; i++) if (r[i] > 1e-6 * r[0]) expect(Math.abs(o.hankel[i] - r[i])).toBeLessThan(1e-8 * r[0]);
    });
    expect(compared).toBeGreaterThanOrEqual(3);
  }, 120_000);
});

describe('the exports agree with each other', () => {
  const canal = path.join(EXAMPLES, 'canal_pools.poise');
  const tower = path.join(EXAMPLES, 'tower_level_loop.poise');
  /** The CSV rows of a matrix as a dense array (row and column by name). */
  const csvMatrix = (csv: string, name: string, rows: string[], cols: string[]) => {
    const m = rows.map(() => cols.map(() => NaN));
    for (const line of csv.trim().split('\n')) {
      const [kind, r, c, v] = line.split(',');
      if (kind === name) m[rows.indexOf(r)][cols.indexOf(c)] = Number(v);
    }
    return m;
  };
  it('sampled: every CSV number equals the JSON one exactly; the LaTeX and Markdown name T and the hold', async () => {
    const args = ['sample', tower, '--every', '0.25', '--hold', 'foh'];
    const [j, c, l, m] = await Promise.all(['json', 'csv', 'latex', 'markdown'].map((f) => runCliAsync([...args, '--format', f])));
    const js = JSON.parse(j.stdout);
    expect(csvMatrix(c.stdout, 'A', js.states, js.states)).toEqual(js.A);
    expect(csvMatrix(c.stdout, 'B', js.states, js.inputs)).toEqual(js.B);
    expect(c.stdout).toMatch(/^sample_time,,,0\.25,min$/m);
    expect(c.stdout).toMatch(/^hold,foh,/m);
    expect(l.stdout).toContain('T = 0.25\\ \\mathrm{min}');
    expect(m.stdout).toContain('first-order (triangle) hold, sample time T = 0.25 min');
  });
  it('reduced: CSV Hankel values and bound equal the JSON ones; the NumPy bound is twice the discarded tail', async () => {
    const args = ['reduce', canal, '--order', '7'];
    const [j, c] = await Promise.all(['json', 'csv'].map((f) => runCliAsync([...args, '--format', f])));
    const js = JSON.parse(j.stdout);
    const hk = c.stdout.split('\n').filter((x) => x.startsWith('hankel,')).map((x) => Number(x.split(',')[3]));
    expect(hk).toEqual(js.hankel);
    expect(c.stdout.split('\n').filter((x) => x.startsWith('hankel,')).slice(6, 8).map((x) => x.split(',')[2])).toEqual(['kept', 'discarded']);
    expect(csvMatrix(c.stdout, 'A', js.states, js.states)).toEqual(js.A);
    expect(js.bound).toBeCloseTo(2 * js.hankel.slice(7).reduce((a: number, b: number) => a + b, 0), 12);
  });
});
