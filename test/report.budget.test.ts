/**
 * The report's work budget and quick report (server/src/core/analysis/report.ts, `poise report --quick`):
 * the budget is work the core counts (integrator step attempts), not a clock, so the same model and
 * budget give the same report; what was left out is said in the report (text, JSON). Independent route:
 * the budgeted validity range is a lower bound of the full search's range (checked against the full run).
 */
import * as path from 'path';
import * as fs from 'fs';
import { beforeAll, describe, expect, it } from 'vitest';
import { analyze } from '../server/src/core/pipeline/analysis';
import { buildReport } from '../server/src/core/analysis/report';
import { formatReportText } from '../server/src/core/present/reportText';
import { renderReportHtml } from '../server/src/core/present/reportHtml';
import { ensureBuilt, EXAMPLES, runCliAsync } from './helpers/cli';

const tank = () => analyze(fs.readFileSync(path.join(EXAMPLES, 'buffer_tank.poise'), 'utf8'));

describe('work budget', () => {
  beforeAll(() => ensureBuilt(), 300_000);
  const full = buildReport(tank(), 'dry_day');
  it('a full report spends work, lists nothing as left out', () => {
    expect(full.work).toBeGreaterThan(0);
    expect(full.skipped).toEqual([]);
    expect(formatReportText(full)).not.toContain('Left out or cut short');
  });

  it('a budget below the full run cuts the validity search, says so, and keeps a lower bound of the range', () => {
    const budget = Math.floor(full.work / 3);
    const cut = buildReport(tank(), 'dry_day', { workBudget: budget });
    expect(cut.work).toBeLessThanOrEqual(budget + 20000); // the last simulation started within the budget
    expect(cut.skipped.some((x) => /work budget/.test(x))).toBe(true);
    expect(formatReportText(cut)).toContain('Left out or cut short');
    expect(renderReportHtml(cut)).toContain('id="skipped"');
    // deterministic: the same budget gives the same result
    const again = buildReport(tank(), 'dry_day', { workBudget: budget });
    expect(again.work).toBe(cut.work);
    expect(again.validity!.map((v) => [v.up?.step, v.down?.step])).toEqual(cut.validity!.map((v) => [v.up?.step, v.down?.step]));
    // lower bound: every limit found within the budget is within the full search's limit
    cut.validity!.forEach((v, j) => {
      for (const dir of ['up', 'down'] as const) {
        const l = v[dir];
        if (l && l.step > 0) expect(l.step).toBeLessThanOrEqual(full.validity![j][dir]!.step * (1 + 1e-12));
      }
    });
  });

  it('the quick report leaves out the validity range and says so; the step responses stay', () => {
    const q = buildReport(tank(), 'dry_day', { quick: true, workBudget: 2000 });
    expect(q.validity).toBeNull();
    expect(q.steps).toHaveLength(2);
    expect(q.steps.every((s) => s.status === 'ok')).toBe(true);
    expect(q.skipped.join(' ')).toMatch(/Validity range: not computed \(quick report\)/);
    expect(q.work).toBeLessThan(full.work);
  });

  it('poise report --quick', async () => {
    const r = await runCliAsync(['report', path.join(EXAMPLES, 'buffer_tank.poise'), '--point', 'dry_day', '--quick', '--format', 'json']);
    expect(r.code, r.stderr).toBe(0);
    const data = JSON.parse(r.stdout);
    expect(data.validity).toBeNull();
    expect(data.skipped[0]).toMatch(/quick report/);
  });
});
