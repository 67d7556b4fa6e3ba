import { lockSignatureMeaning } from '@counterpoise/contracts/analysis';
import bcrypt from 'bcryptjs';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { seedAnalysis } from '../../../seed/seed-analysis.js';
import { seedDemo } from '../../../seed/seed-demo.js';
import { auditCount, createTestContext, signIn, TEST_PASSWORD, type TestContext } from '../../../test/harness.js';

let t: TestContext;
beforeAll(async () => {
  t = await createTestContext();
});
afterAll(async () => t.close());

describe('analysis demo seed', () => {
  it('does nothing and says so before KESTREL has participants; then seeds a draft and outcomes once; the demo statistician can lock and run it', async () => {
    const early = await seedAnalysis(t.ctx.ds);
    expect(early).toMatchObject({ created: false });
    expect(early.detail).toMatch(/skipped/);

    await seedDemo(t.ctx.ds, await bcrypt.hash(TEST_PASSWORD, 4), t.ctx.jobs);
    const first = await seedAnalysis(t.ctx.ds);
    expect(first.created).toBe(true);
    const audit = await auditCount(t);
    const second = await seedAnalysis(t.ctx.ds);
    expect(second.created).toBe(false);
    expect(await auditCount(t)).toBe(audit);

    const [spec] = await t.ownerQuery<{ status: string; version: number }>(
      `SELECT s.status, s.version FROM analysis_spec s JOIN study st ON st.id = s.study_id WHERE st.code = 'KESTREL'`,
    );
    expect(spec).toEqual({ status: 'draft', version: 1 });
    // Every seeded outcome is dated on or after its participant's enrollment, and not in the future.
    const bad = await t.ownerQuery(
      `SELECT 1 FROM outcome_value o JOIN participant p ON p.id = o.participant_id
        WHERE o.measured_on < (p.enrolled_at AT TIME ZONE 'UTC')::date OR o.measured_on > current_date`,
    );
    expect(bad).toHaveLength(0);

    const stat = await signIn(t, 'statistician@counterpoise.example');
    const [{ id }] = (await t.ownerQuery<{ id: string }>(`SELECT id FROM study WHERE code = 'KESTREL'`)) as [{ id: string }];
    const locked = await stat.post(`/api/studies/${id}/analysis/spec/lock`).send({ version: 1, password: TEST_PASSWORD, meaning: lockSignatureMeaning });
    expect(locked.status).toBe(200);
    const run = await stat.post(`/api/studies/${id}/analysis/runs`).send({});
    expect(run.status).toBe(201);
    const result = run.body.run.result;
    expect(result.exploratory).toBe(false);
    expect(result.data.analysed).toBeGreaterThan(100);
    // The invented programme effect is positive (HBW minus UC).
    expect(result.differences[0]).toMatchObject({ a: 'HBW', b: 'UC' });
    expect(result.differences[0].difference).toBeGreaterThan(0);
    expect(result.errorMeanSquareRatio).toBeLessThan(0.7);
  });
});
