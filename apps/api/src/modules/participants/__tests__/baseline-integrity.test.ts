import { randomUUID } from 'node:crypto';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createTestContext, type TestContext } from '../../../test/harness.js';
import { castStudy, enrollBody, type Cast } from './fixtures.js';

/* Baseline values' references are checked per statement by triggers (migration bulk-integrity). */
let t: TestContext;
let c: Cast;
let participantId: string;
let covariateId: string;
beforeAll(async () => {
  t = await createTestContext();
  c = await castStudy(t);
  const res = await c.coordinator.post(`/api/studies/${c.studyId}/participants`).send(enrollBody(c.siteIds[0]!));
  expect(res.status).toBe(201);
  participantId = res.body.participant.id;
  const [row] = await t.ownerQuery<{ covariate_id: string }>(`SELECT covariate_id FROM baseline_value WHERE participant_id = $1 LIMIT 1`, [participantId]);
  covariateId = row!.covariate_id;
});
afterAll(async () => t.close());

describe('baseline value references', () => {
  it('a value for a participant that does not exist is refused, and nothing of the statement stays', async () => {
    const before = await t.ownerQuery<{ n: number }>(`SELECT count(*)::int AS n FROM baseline_value`);
    await expect(
      t.ctx.ds.query(
        `INSERT INTO baseline_value (participant_id, covariate_id, value_number, measured_on)
         VALUES ($1, $2, 1, current_date), ($3, $2, 1, current_date)`,
        [randomUUID(), covariateId, randomUUID()],
      ),
    ).rejects.toThrow(/participant that does not exist/);
    const after = await t.ownerQuery<{ n: number }>(`SELECT count(*)::int AS n FROM baseline_value`);
    expect(after[0]!.n).toBe(before[0]!.n);
  });

  it('a value for a covariate that does not exist is refused, on insert and on update', async () => {
    await expect(
      t.ctx.ds.query(`INSERT INTO baseline_value (participant_id, covariate_id, value_number, measured_on) VALUES ($1, $2, 1, current_date)`, [
        participantId,
        randomUUID(),
      ]),
    ).rejects.toThrow(/covariate that does not exist/);
    await expect(
      t.ctx.ds.query(`UPDATE baseline_value SET covariate_id = $2 WHERE participant_id = $1 AND covariate_id = $3`, [participantId, randomUUID(), covariateId]),
    ).rejects.toThrow(/covariate that does not exist/);
  });

  it('a participant or covariate with values cannot be deleted', async () => {
    await expect(t.ownerQuery(`DELETE FROM covariate_definition WHERE id = $1`, [covariateId])).rejects.toThrow(/still has baseline values/);
    await expect(t.ownerQuery(`DELETE FROM participant WHERE id = $1`, [participantId])).rejects.toThrow(/still has baseline values|violates foreign key/);
    const left = await t.ownerQuery(`SELECT 1 FROM baseline_value WHERE participant_id = $1`, [participantId]);
    expect(left.length).toBeGreaterThan(0);
  });
});
