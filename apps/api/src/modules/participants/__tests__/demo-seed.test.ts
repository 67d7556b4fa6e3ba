import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createTestContext, type TestContext } from '../../../test/harness.js';
import { seedDemo } from '../../../seed/seed-demo.js';
import { loadDesign } from '../../design/study-design.js';
import { allocationList } from '../allocation-list.service.js';

let t: TestContext;
beforeAll(async () => {
  t = await createTestContext();
});
afterAll(async () => t.close());

type Row = { arm: string; site: string; age: number; ldl: number | null };
const mean = (xs: number[]) => xs.reduce((a, b) => a + b, 0) / xs.length;
const variance = (xs: number[]) => xs.reduce((a, x) => a + (x - mean(xs)) ** 2, 0) / (xs.length - 1);
/** Continuous SMD with the pooled SD sqrt((s2_T + s2_C)/2) (Austin, Stat Med 2009;28:3083). */
const smd = (t: number[], c: number[]) => (mean(t) - mean(c)) / Math.sqrt((variance(t) + variance(c)) / 2);

async function rows(code: string): Promise<Row[]> {
  return t.ownerQuery<Row>(
    `SELECT arm.code AS arm, s.code AS site,
            (SELECT value_number FROM baseline_value bv JOIN covariate_definition c ON c.id = bv.covariate_id WHERE bv.participant_id = p.id AND c.key = 'age') AS age,
            (SELECT value_number FROM baseline_value bv JOIN covariate_definition c ON c.id = bv.covariate_id WHERE bv.participant_id = p.id AND c.key = 'ldl') AS ldl
       FROM participant p JOIN study st ON st.id = p.study_id JOIN site s ON s.id = p.site_id
       LEFT JOIN allocation a ON a.participant_id = p.id JOIN arm ON arm.id = COALESCE(a.arm_id, p.exposure_arm_id)
      WHERE st.code = $1 AND p.status = 'enrolled'`,
    [code],
  );
}

describe('demo seed', () => {
  it('enrolls KESTREL and HEARTHSTONE through the enrollment service, and a second run adds nothing', async () => {
    const first = await seedDemo(t.ctx.ds, 'x'.repeat(60), t.ctx.jobs);
    expect(first.detail).toMatch(/KESTREL: 332 enrolled, HEARTHSTONE: 400 enrolled/);
    const audit = (await t.ownerQuery<{ n: number }>(`SELECT count(*)::int AS n FROM audit_event`))[0]!.n;
    const second = await seedDemo(t.ctx.ds, 'x'.repeat(60), t.ctx.jobs);
    expect(second.created).toBe(false);
    expect((await t.ownerQuery<{ n: number }>(`SELECT count(*)::int AS n FROM audit_event`))[0]!.n).toBe(audit);
    const screen = await t.ownerQuery<{ n: number }>(`SELECT count(*)::int AS n FROM screening WHERE NOT eligible`);
    expect(screen[0]!.n).toBe(14);
  });

  it('KESTREL is balanced overall by its blocks, the list reproduces from the seed, and at SRH age drifts between arms beyond chance', async () => {
    const r = await rows('KESTREL');
    const hbw = r.filter((x) => x.arm === 'HBW');
    const uc = r.filter((x) => x.arm === 'UC');
    // K = 6 sites x 3 smoking levels = 18 strata, B = 6: |HBW - UC| <= K*B/2 = 54 (Hallstrom & Davis 1988); in practice far less.
    expect(Math.abs(hbw.length - uc.length)).toBeLessThanOrEqual(18);
    const srh = (arm: string) => r.filter((x) => x.site === 'SRH' && x.arm === arm).map((x) => x.age);
    const d = smd(srh('HBW'), srh('UC'));
    // Chance band: SE(SMD) ~ sqrt(1/n_T + 1/n_C) (DOMAIN.md); beyond 2 SE is beyond chance.
    const se = Math.sqrt(1 / srh('HBW').length + 1 / srh('UC').length);
    expect(d / se).toBeGreaterThan(2);
    const others = (arm: string) => r.filter((x) => x.site !== 'SRH' && x.arm === arm).map((x) => x.age);
    expect(Math.abs(smd(others('HBW'), others('UC')))).toBeLessThan(0.2);
    const design = await loadDesign(t.ctx.ds, (await t.ownerQuery<{ id: string }>(`SELECT id FROM study WHERE code = 'KESTREL'`))[0]!.id);
    const list = await allocationList(t.ctx, design);
    expect(list.mismatches).toBe(0);
  });

  it('HEARTHSTONE has about 400 participants, the exposed group older with higher LDL before weighting', async () => {
    const r = await rows('HEARTHSTONE');
    expect(r).toHaveLength(400);
    const started = r.filter((x) => x.arm === 'STARTED');
    const not = r.filter((x) => x.arm === 'NOT_STARTED');
    expect(started.length).toBeGreaterThan(100);
    expect(not.length).toBeGreaterThan(100);
    expect(smd(started.map((x) => x.age), not.map((x) => x.age))).toBeGreaterThan(0.3);
    expect(smd(started.map((x) => x.ldl!), not.map((x) => x.ldl!))).toBeGreaterThan(0.3);
  });
});
