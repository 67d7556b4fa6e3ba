import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { pino } from 'pino';
import type PgBoss from 'pg-boss';
import { createStudy, createTestContext, createUser, signIn, type TestContext } from '../../../test/harness.js';
import { digestWeeklyHandler } from '../digest.job.js';
import { digestPeriod, sendWeeklyDigests } from '../digest.service.js';

let t: TestContext;
let study: { id: string; siteIds: string[]; armIds: string[] };
let sponsors: { id: string; email: string }[];
let statistician: { id: string; email: string };
// The week that the first run reports on, and an enrollment date inside it.
const runAt = new Date(Date.now() + 7 * 86_400_000);
const enrolledOn = `${digestPeriod(runAt).start}T12:00:00Z`;

beforeAll(async () => {
  t = await createTestContext();
  study = await createStudy(t, { sites: ['DG1', 'DG2'], arms: ['TRT', 'CTL'] });
  sponsors = [
    await createUser(t, { memberships: [{ studyId: study.id, role: 'sponsor' }] }),
    await createUser(t, { memberships: [{ studyId: study.id, role: 'sponsor' }] }),
  ];
  statistician = await createUser(t, { memberships: [{ studyId: study.id, role: 'statistician' }] });
  // Six enrolled participants with allocations; the digest must never mention the arms.
  for (let i = 0; i < 6; i++) {
    const [p] = await t.ownerQuery<{ id: string }>(
      `INSERT INTO participant (study_id, site_id, code, status, enrolled_at) VALUES ($1, $2, $3, 'enrolled', $4::timestamptz + make_interval(days => $5))
       RETURNING id`,
      [study.id, study.siteIds[i % 2], `DG-${i}`, enrolledOn, i % 3],
    );
    await t.ownerQuery(
      `INSERT INTO allocation (participant_id, study_id, arm_id, stratum_key, position, kit_code, algorithm, algorithm_version, design_version)
       VALUES ($1, $2, $3, 'all', $4, $5, 'test', '1', 1)`,
      [p!.id, study.id, study.armIds[i % 2], i, `KIT-${i}`],
    );
  }
});
afterAll(async () => t.close());

describe('weekly sponsor digest', () => {
  it('the period is the seven UTC days before the current Monday', () => {
    expect(digestPeriod(new Date('2026-12-02T10:00:00Z'))).toEqual({ start: '2026-11-23', end: '2026-11-29' });
    expect(digestPeriod(new Date('2026-11-30T00:00:00Z'))).toEqual({ start: '2026-11-23', end: '2026-11-29' });
    expect(digestPeriod(new Date('2026-11-29T23:59:00Z'))).toEqual({ start: '2026-11-16', end: '2026-11-22' });
  });

  it('when the job runs, then each sponsor gets one blinded digest, others none, and a re-run sends nothing', async () => {
    const now = runAt;
    const first = await sendWeeklyDigests(t.ctx, now);
    expect(first).toEqual({ sent: 2, skipped: 0 });
    const mail = await t.smtp.list();
    const digests = mail.filter((m) => /weekly digest/.test(m.subject));
    expect(digests.map((m) => m.to).flat().sort()).toEqual(sponsors.map((s) => s.email).sort());
    expect(digests.some((m) => m.to.includes(statistician.email))).toBe(false);
    const text = digests[0]!.text;
    expect(text).toMatch(/Enrolled: 6 of 200/);
    expect(text).toMatch(/6 new this week/);
    expect(text).toMatch(/DG1 .*: 3 \/ 50/);
    for (const armWord of ['TRT', 'CTL', 'Arm ', 'KIT-']) expect(text).not.toContain(armWord);

    const again = await sendWeeklyDigests(t.ctx, now);
    expect(again).toEqual({ sent: 0, skipped: 2 });
    expect((await t.smtp.list()).filter((m) => /weekly digest/.test(m.subject))).toHaveLength(2);
    const audit = await t.ownerQuery<{ n: number }>(`SELECT count(*)::int AS n FROM audit_event WHERE action = 'digest.sent'`);
    expect(audit[0]!.n).toBe(2);
  });

  it('when the mail server refuses, then the claim is rolled back so the retry can send', async () => {
    const later = new Date(Date.now() + 14 * 86_400_000);
    const broken = { ...t.ctx, mailer: { send: async () => false } };
    await expect(sendWeeklyDigests(broken, later)).rejects.toThrow(/not accepted/);
    const claims = await t.ownerQuery<{ n: number }>(
      `SELECT count(*)::int AS n FROM digest_delivery WHERE period_start = $1`,
      [digestPeriod(later).start],
    );
    expect(claims[0]!.n).toBe(0);
    await digestWeeklyHandler.handle({ ...t.ctx }, [{ id: 'j1' } as PgBoss.Job<object>], pino({ level: 'silent' }));
    const delivered = await t.ownerQuery<{ n: number }>(`SELECT count(*)::int AS n FROM digest_delivery`);
    expect(delivered[0]!.n).toBeGreaterThanOrEqual(2);
  });

  it('GET /digest/preview: sponsors and statisticians see it, coordinators are refused', async () => {
    const s = await signIn(t, sponsors[0]!.email);
    const res = await s.get(`/api/studies/${study.id}/digest/preview`);
    expect(res.status).toBe(200);
    expect(res.body.text).toMatch(/blinded/);
    const coord = await createUser(t, { memberships: [{ studyId: study.id, role: 'coordinator', siteIds: [study.siteIds[0]!] }] });
    const c = await signIn(t, coord.email);
    expect((await c.get(`/api/studies/${study.id}/digest/preview`)).status).toBe(403);
  });
});
