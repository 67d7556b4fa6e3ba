import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { auditCount, createTestContext, createUser, signIn, type TestContext } from '../../../test/harness.js';
import { createBalanceStudy, enqueue, enroll, runJob, type BalanceStudy, type Enrollee } from './balance-fixtures.js';

/*
 * One covariate drifts at one site: site S2 enrolls pairs whose age differs by 12 years between
 * the arms (same spread), while four larger sites enroll identical pairs. The overall SMD stays
 * near 0.08 (below 0.1 and inside the chance band); at S2 it is about 1.3, beyond the 95% chance
 * band once S2 has the minimum of 10 per arm.
 */
const COVS = [
  { key: 'age', kind: 'continuous' as const },
  { key: 'smoker', kind: 'binary' as const },
  { key: 'region', kind: 'categorical' as const, levels: ['north', 'south', 'east'] },
];
const age = (i: number) => 50 + ((i * 7) % 20) * 1.5;
const pair = (site: number, i: number, shift: number): Enrollee[] => {
  const values = { smoker: i % 3 === 0 ? 1 : 0, region: ['north', 'south', 'east'][i % 3]! };
  return [
    { site, arm: 0, values: { ...values, age: age(i) } },
    { site, arm: 1, values: { ...values, age: age(i) + shift } },
  ];
};

describe('balance drift alerts', () => {
  let t: TestContext;
  let study: BalanceStudy;
  let stats: { id: string; email: string }[];
  let others: { id: string; email: string }[];

  beforeAll(async () => {
    t = await createTestContext();
    // Site-level threshold alerts switched on as well as the chance-aware ones (the default is
    // chance-aware only at sites; see the test of the defaults below).
    study = await createBalanceStudy(t, {
      sites: ['S1', 'S2', 'S3', 'S4', 'S5'],
      covariates: COVS,
      design: { alertRules: { siteRules: ['smd_threshold', 'smd_beyond_chance'] } },
    });
    stats = [
      await createUser(t, { memberships: [{ studyId: study.id, role: 'statistician' }] }),
      await createUser(t, { memberships: [{ studyId: study.id, role: 'statistician' }] }),
    ];
    others = [
      await createUser(t, { memberships: [{ studyId: study.id, role: 'sponsor' }] }),
      await createUser(t, { memberships: [{ studyId: study.id, role: 'coordinator', siteIds: [study.siteIds[1]!] }] }),
      await createUser(t, { memberships: [{ studyId: study.id, role: 'auditor' }] }),
    ];
    const balanced: Enrollee[] = [];
    for (const site of [0, 2, 3, 4]) for (let i = 0; i < 80; i++) balanced.push(...pair(site, i, 0));
    await enroll(t, study, balanced);
    await runJob(t, { studyId: study.id, reason: 'import' });
  });
  afterAll(async () => {
    await t.close();
  });

  it('when enrollment drives age out of balance at one site, then each statistician gets exactly one e-mail, nobody else gets any, and a retried job sends nothing more', async () => {
    expect(await t.smtp.list()).toHaveLength(0);
    let lastJob = '';
    for (let step = 0; step < 5; step++) {
      const batch: Enrollee[] = [];
      for (let i = step * 4; i < step * 4 + 4; i++) batch.push(...pair(1, i, 12));
      await enroll(t, study, batch);
      await enqueue(t, study.id, 'enrollment');
      lastJob = `00000000-0000-4000-8000-00000000000${step}`;
      await runJob(t, { studyId: study.id, reason: 'enrollment' }, lastJob);
    }
    const mails = await t.smtp.list();
    const recipients = mails.flatMap((m) => m.to).sort();
    expect(recipients).toEqual(stats.map((s) => s.email).sort());
    for (const o of others) expect(recipients).not.toContain(o.email);

    const text = mails[0]!.text;
    expect(text).toMatch(/age/);
    expect(text).toMatch(/site S2/);
    expect(text).toMatch(/SMD 1\.\d{3}/);
    expect(text).toMatch(/95% chance band \+\/-0\.\d{3}/);
    expect(text).toMatch(/chance alone gives on average \d+\.\d of 3 covariates/);
    expect(text).toMatch(/does not justify adding a covariate/);
    expect(text).toMatch(/pre-specified analysis stands/);

    const alerts = await t.ownerQuery<{ rule: string; site_id: string | null; covariate_key: string; state: string }>(
      `SELECT rule, site_id, covariate_key, state FROM alert WHERE study_id = $1 ORDER BY rule`,
      [study.id],
    );
    expect(alerts.map((a) => [a.rule, a.covariate_key, a.site_id, a.state])).toEqual([
      ['smd_beyond_chance', 'age', study.siteIds[1], 'open'],
      ['smd_threshold', 'age', study.siteIds[1], 'open'],
    ]);
    const notifications = await t.ownerQuery<{ n: number; sent: number }>(
      `SELECT count(*)::int AS n, count(sent_at)::int AS sent FROM alert_notification`,
    );
    expect(notifications[0]).toEqual({ n: 4, sent: 4 });
    const audited = await t.ownerQuery<{ n: number }>(
      `SELECT count(*)::int AS n FROM audit_event WHERE action = 'balance.alert_opened' AND actor_role = 'system' AND reveals_allocation`,
    );
    expect(audited[0]!.n).toBe(2);

    // pg-boss retrying the last job (same id) changes nothing and sends nothing.
    await runJob(t, { studyId: study.id, reason: 'enrollment' }, lastJob);
    await runJob(t, { studyId: study.id, reason: 'enrollment' }, lastJob);
    expect(await t.smtp.list()).toHaveLength(mails.length);
    expect((await t.ownerQuery<{ n: number }>(`SELECT count(*)::int AS n FROM alert WHERE study_id = $1`, [study.id]))[0]!.n).toBe(2);
  });

  it('when the statistician acknowledges an alert with a comment, then it is acknowledged, audited, and other roles cannot', async () => {
    const agent = await signIn(t, stats[0]!.email);
    const list = await agent.get(`/api/studies/${study.id}/alerts?state=open`);
    expect(list.status).toBe(200);
    expect(list.body.alerts).toHaveLength(2);
    expect(list.body.cautions.join(' ')).toMatch(/pre-specified analysis stands/);
    const id: string = list.body.alerts[0].id;

    const sponsor = await signIn(t, others[0]!.email);
    expect((await sponsor.get(`/api/studies/${study.id}/alerts`)).status).toBe(403);
    expect((await sponsor.patch(`/api/studies/${study.id}/alerts/${id}`).send({ state: 'acknowledged', comment: 'seen it' })).status).toBe(403);

    const before = await auditCount(t);
    const bad = await agent.patch(`/api/studies/${study.id}/alerts/${id}`).send({ state: 'acknowledged', comment: '' });
    expect(bad.status).toBe(400);
    const res = await agent
      .patch(`/api/studies/${study.id}/alerts/${id}`)
      .send({ state: 'acknowledged', comment: 'Chance imbalance at a small site; analysis plan unchanged' });
    expect(res.status).toBe(200);
    expect(res.body.alert.state).toBe('acknowledged');
    expect(res.body.alert.acknowledgedBy.email).toBe(stats[0]!.email);
    const [row] = await t.ownerQuery<{ state: string; acknowledge_comment: string; acknowledged_by: string }>(
      `SELECT state, acknowledge_comment, acknowledged_by FROM alert WHERE id = $1`,
      [id],
    );
    expect(row).toEqual({ state: 'acknowledged', acknowledge_comment: 'Chance imbalance at a small site; analysis plan unchanged', acknowledged_by: stats[0]!.id });
    expect(await auditCount(t)).toBe(before + 1);
    const [entry] = await t.ownerQuery<{ action: string; actor_email: string; reveals_allocation: boolean }>(
      `SELECT action, actor_email, reveals_allocation FROM audit_event ORDER BY seq DESC LIMIT 1`,
    );
    expect(entry).toEqual({ action: 'balance.alert_acknowledged', actor_email: stats[0]!.email, reveals_allocation: true });
  });

  it('when the imbalance clears and later returns, then the alert clears and a new opening e-mails the statisticians once more', async () => {
    const before = (await t.smtp.list()).length;
    // The mirror image at S2: the arms then hold the same ages, so SMD 0 and variance ratio 1.
    const reversed: Enrollee[] = [];
    for (let i = 0; i < 20; i++) {
      const [a, b] = pair(1, i, 0) as [Enrollee, Enrollee];
      reversed.push({ ...a, values: { ...a.values, age: age(i) + 12 } }, b);
    }
    await enroll(t, study, reversed);
    await runJob(t, { studyId: study.id, reason: 'enrollment' });
    const states = await t.ownerQuery<{ state: string }>(`SELECT state FROM alert WHERE study_id = $1`, [study.id]);
    expect(states.map((s) => s.state).sort()).toEqual(['cleared', 'cleared']);
    expect((await t.smtp.list()).length).toBe(before);

    const again: Enrollee[] = [];
    for (let i = 0; i < 40; i++) again.push(...pair(1, i, 15));
    await enroll(t, study, again);
    await runJob(t, { studyId: study.id, reason: 'enrollment' });
    const openings = await t.ownerQuery<{ opening: number; state: string }>(
      `SELECT opening, state FROM alert WHERE study_id = $1 AND state = 'open' AND site_id IS NOT NULL
        AND rule IN ('smd_threshold', 'smd_beyond_chance') ORDER BY rule`,
      [study.id],
    );
    expect(openings.map((o) => o.opening)).toEqual([2, 2]);
    const mails = await t.smtp.list();
    expect(mails.length).toBe(before + 2);
    expect(mails.slice(before).flatMap((m) => m.to).sort()).toEqual(stats.map((s) => s.email).sort());
  });

  it('with the default rules, a site alerts only beyond its chance band, never on the bare 0.1 threshold', async () => {
    const t2 = await createTestContext();
    try {
      const s2 = await createBalanceStudy(t2, { sites: ['D1', 'D2'], covariates: COVS });
      await createUser(t2, { memberships: [{ studyId: s2.id, role: 'statistician' }] });
      // D1: a modest age gap (SMD about 0.3, over 0.1 but inside the chance band of 20 per arm);
      // D2: a large one (SMD above 1, beyond the band).
      const rows: Enrollee[] = [];
      for (let i = 0; i < 20; i++) rows.push(...pair(0, i, 2), ...pair(1, i, 12));
      await enroll(t2, s2, rows);
      await runJob(t2, { studyId: s2.id, reason: 'enrollment' });
      const alerts = await t2.ownerQuery<{ rule: string; site_id: string | null }>(
        `SELECT rule, site_id FROM alert WHERE study_id = $1 AND site_id IS NOT NULL ORDER BY rule`,
        [s2.id],
      );
      expect(alerts).toEqual([{ rule: 'smd_beyond_chance', site_id: s2.siteIds[1] }]);
      // The e-mail also says how many covariates chance alone puts beyond the band (5% of 3).
      const mails = await t2.smtp.list();
      expect(mails).toHaveLength(1);
      expect(mails[0]!.text).toMatch(/Beyond the 95% chance band itself, chance alone gives on average 0\.2 of 3 covariates/);
    } finally {
      await t2.close();
    }
  });
});
