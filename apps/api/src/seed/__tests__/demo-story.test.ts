import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { recomputeBalance } from '../../modules/balance/balance-recompute.job.js';
import { createTestContext, type TestContext } from '../../test/harness.js';
import { seedDemo } from '../seed-demo.js';

/*
 * The demo is invented data that has to tell its story at a glance (see seed-enrollment.ts):
 * KESTREL balanced overall, one site drifting on one covariate beyond chance and so exactly one
 * open alert with its e-mail; HEARTHSTONE imbalanced before weighting and balanced after.
 * The balance figures come from the real recompute job, as the worker would compute them.
 */
let t: TestContext;
let ids: Record<string, string>;
beforeAll(async () => {
  t = await createTestContext();
  await seedDemo(t.ctx.ds, 'x'.repeat(60), t.ctx.jobs, async (studyId) => {
    await recomputeBalance(t.ctx, { studyId, reason: 'demo enrollment', full: true });
  });
  const rows = await t.ownerQuery<{ id: string; code: string }>(`SELECT id, code FROM study`);
  ids = Object.fromEntries(rows.map((r) => [r.code, r.id]));
}, 180_000);
afterAll(async () => t.close());

type Comparison = { smd: number | null; chanceBand: { halfWidth: number } | null };
type Snapshot = {
  covariates: { key: string; balance: { comparisons: Comparison[] } }[];
  weighting: { status: string; covariates: { key: string; smdBefore: number | null; smdAfter: number | null }[] } | null;
};

const latest = async (studyId: string) =>
  (
    await t.ownerQuery<{ result: Snapshot }>(
      `SELECT result FROM balance_snapshot WHERE study_id = $1 ORDER BY computed_at DESC LIMIT 1`,
      [studyId],
    )
  )[0]!.result;

describe('the demo story', () => {
  it('KESTREL: every covariate balanced overall (|SMD| < 0.1, inside the chance band)', async () => {
    const snap = await latest(ids.KESTREL!);
    expect(snap.covariates.length).toBe(8);
    for (const c of snap.covariates) {
      const cmp = c.balance.comparisons[0]!;
      expect(Math.abs(cmp.smd!), c.key).toBeLessThan(0.1);
      expect(Math.abs(cmp.smd!), c.key).toBeLessThan(cmp.chanceBand!.halfWidth);
    }
  });

  it('KESTREL: exactly one open alert, age at Sable Ridge beyond its chance band, e-mailed to the statistician', async () => {
    const open = await t.ownerQuery<{ rule: string; covariate_key: string; site: string | null }>(
      `SELECT a.rule, a.covariate_key, s.code AS site FROM alert a LEFT JOIN site s ON s.id = a.site_id
        WHERE a.study_id = $1 AND a.state = 'open'`,
      [ids.KESTREL],
    );
    expect(open).toEqual([{ rule: 'smd_beyond_chance', covariate_key: 'age', site: 'SRH' }]);
    const mails = (await t.smtp.list()).filter((m) => m.subject.includes('KESTREL'));
    expect(mails.length).toBeGreaterThanOrEqual(1);
    expect(mails.some((m) => /age/.test(m.text) && /SRH|Sable Ridge/.test(m.text))).toBe(true);
    for (const m of mails) expect(m.to).toEqual(['statistician@counterpoise.example']);
  });

  it('KESTREL: the balance history has a snapshot for each step of enrollment', async () => {
    const n = await t.ownerQuery<{ n: number }>(`SELECT count(*)::int AS n FROM balance_snapshot WHERE study_id = $1`, [ids.KESTREL]);
    expect(n[0]!.n).toBeGreaterThanOrEqual(12);
  });

  it('HEARTHSTONE: clear imbalance before weighting, balance after, and no open alert', async () => {
    const snap = await latest(ids.HEARTHSTONE!);
    expect(snap.weighting?.status).toBe('ok');
    const byKey = new Map(snap.weighting!.covariates.map((c) => [c.key, c]));
    expect(Math.abs(byKey.get('age')!.smdBefore!)).toBeGreaterThan(0.3);
    expect(Math.abs(byKey.get('ldl')!.smdBefore!)).toBeGreaterThan(0.3);
    for (const c of snap.weighting!.covariates) expect(Math.abs(c.smdAfter ?? 0), c.key).toBeLessThan(0.1);
    const open = await t.ownerQuery<{ n: number }>(
      `SELECT count(*)::int AS n FROM alert WHERE study_id = $1 AND state = 'open'`,
      [ids.HEARTHSTONE],
    );
    expect(open[0]!.n).toBe(0);
  });
});
