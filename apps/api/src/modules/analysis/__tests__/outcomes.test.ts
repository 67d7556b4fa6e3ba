import { outcomesOverviewSchema } from '@counterpoise/contracts/analysis';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { auditCount, createTestContext, type TestContext } from '../../../test/harness.js';
import { baseSpec, castAnalysisStudy, daysAgo, outcomeRows, type Cast } from './analysis-fixtures.js';

/*
 * Outcome entry as the web uses it: what the page reads (GET .../outcomes), the check that
 * writes nothing (POST .../outcomes/check), and the row-level answers of the PUT.
 */

let t: TestContext;
beforeAll(async () => {
  t = await createTestContext();
});
afterAll(async () => {
  await t.close();
});

const url = (c: Cast, tail: string) => `/api/studies/${c.studyId}${tail}`;

/** The stored outcomes as one comparable text (value and date per participant). */
const outcomeState = () =>
  t.ownerQuery<{ s: string }>(
    `SELECT coalesce(string_agg(participant_id::text || '=' || value::text || '@' || measured_on::text, ',' ORDER BY participant_id), '') AS s FROM outcome_value`,
  );

async function withSpec(n = 12) {
  const c = await castAnalysisStudy(t, { n });
  const saved = await c.statistician.put(url(c, '/analysis/spec')).send({ spec: baseSpec() });
  expect(saved.status).toBe(200);
  return c;
}

describe('GET /studies/:studyId/outcomes', () => {
  it('when the study has no specification yet, then there is no outcome and no completeness', async () => {
    const c = await castAnalysisStudy(t, { n: 4 });
    const res = await c.coordinator.get(url(c, '/outcomes'));
    expect(res.status).toBe(200);
    expect(res.body).toMatchObject({ outcome: null, specVersion: null, specStatus: null, completeness: null });
  });

  it('when a coordinator reads it, then the outcome is named and completeness covers their own site only, with no arm', async () => {
    const c = await withSpec(12);
    // Outcomes for the first three participants of each site.
    const some = c.participants.filter((p) => c.participants.filter((q) => q.site === p.site).indexOf(p) < 3);
    await c.statistician.put(url(c, '/outcomes')).send({ outcomeKey: 'walk_final', rows: outcomeRows(c, (p) => some.includes(p)) });

    const stat = await c.statistician.get(url(c, '/outcomes'));
    expect(stat.status).toBe(200);
    expect(outcomesOverviewSchema.parse(stat.body)).toMatchObject({
      outcome: { key: 'walk_final', label: 'Walk distance at week 12', unit: 'm' },
      specVersion: 1,
      specStatus: 'draft',
    });
    // Direct counts from the database, per site.
    const direct = await t.ownerQuery<{ code: string; eligible: number; recorded: number }>(
      `SELECT s.code, count(p.id)::int AS eligible, count(o.participant_id)::int AS recorded
         FROM site s JOIN participant p ON p.site_id = s.id
         LEFT JOIN outcome_value o ON o.participant_id = p.id AND o.outcome_key = 'walk_final'
        WHERE s.study_id = $1 GROUP BY s.code ORDER BY s.code`,
      [c.studyId],
    );
    expect(stat.body.completeness.bySite.map((s: { siteCode: string; eligible: number; recorded: number }) => [s.siteCode, s.eligible, s.recorded])).toEqual(
      direct.map((d) => [d.code, d.eligible, d.recorded]),
    );
    expect(stat.body.completeness.recorded).toBe(6);

    const coord = await c.coordinator.get(url(c, '/outcomes'));
    expect(coord.status).toBe(200);
    const s1 = direct.find((d) => d.code === 'S1')!;
    expect(coord.body.completeness).toMatchObject({ eligible: s1.eligible, recorded: s1.recorded, missing: s1.eligible - s1.recorded });
    expect(coord.body.completeness.bySite.map((s: { siteCode: string }) => s.siteCode)).toEqual(['S1']);
    const text = JSON.stringify(coord.body);
    for (const armId of c.armIds) expect(text).not.toContain(armId);
    expect(text).not.toMatch(/HBW|"UC"|arm/i);
  });
});

describe('POST /studies/:studyId/outcomes/check', () => {
  it('when rows would create and correct values, then it counts them as the PUT then does, asks no reason and writes nothing', async () => {
    const c = await withSpec(8);
    const [a, b, d] = c.participants.filter((p) => p.site === 0) as [Cast['participants'][number], Cast['participants'][number], Cast['participants'][number]];
    await c.statistician.put(url(c, '/outcomes')).send({
      outcomeKey: 'walk_final',
      rows: [
        { participantCode: a.code, value: 300, measuredOn: daysAgo(5) },
        { participantCode: b.code, value: 310, measuredOn: daysAgo(5) },
      ],
    });
    const rows = [
      { participantCode: a.code, value: 300, measuredOn: daysAgo(5) }, // unchanged
      { participantCode: b.code, value: 315, measuredOn: daysAgo(5) }, // a correction
      { participantCode: d.code, value: 320, measuredOn: daysAgo(4) }, // new
    ];
    const before = await auditCount(t);
    const stored = await outcomeState();

    const check = await c.coordinator.post(url(c, '/outcomes/check')).send({ outcomeKey: 'walk_final', rows });
    expect(check.status, JSON.stringify(check.body)).toBe(200);
    expect(check.body).toMatchObject({ created: 1, corrected: 1, unchanged: 1 });
    expect(await auditCount(t)).toBe(before);
    expect(await outcomeState()).toEqual(stored);

    const put = await c.coordinator.put(url(c, '/outcomes')).send({ outcomeKey: 'walk_final', rows, reason: 'Re-measured' });
    expect(put.status).toBe(200);
    expect(put.body).toMatchObject({ created: 1, corrected: 1, unchanged: 1 });
    expect(await auditCount(t)).toBe(before + 2);
  });

  it('when a row names an unknown participant, then it answers 400 naming that row, as the PUT would', async () => {
    const c = await withSpec(4);
    const own = c.participants.find((p) => p.site === 0)!;
    const res = await c.coordinator.post(url(c, '/outcomes/check')).send({
      outcomeKey: 'walk_final',
      rows: [
        { participantCode: own.code, value: 300, measuredOn: daysAgo(2) },
        { participantCode: 'NOBODY-1', value: 300, measuredOn: daysAgo(2) },
      ],
    });
    expect(res.status).toBe(400);
    expect(res.body.error.details.issues).toEqual([{ path: ['rows', '1', 'participantCode'], message: 'No participant NOBODY-1 in this study' }]);
  });
});

describe('PUT /studies/:studyId/outcomes: row-level answers', () => {
  it('when a coordinator sends a row of another site among their own, then 403 names that row and nothing is written', async () => {
    const c = await withSpec(6);
    const own = c.participants.find((p) => p.site === 0)!;
    const other = c.participants.find((p) => p.site === 1)!;
    const before = await auditCount(t);
    const stored = await outcomeState();
    const res = await c.coordinator.put(url(c, '/outcomes')).send({
      outcomeKey: 'walk_final',
      rows: [
        { participantCode: own.code, value: 301, measuredOn: daysAgo(2) },
        { participantCode: other.code, value: 302, measuredOn: daysAgo(2) },
      ],
    });
    expect(res.status).toBe(403);
    expect(res.body.error.code).toBe('forbidden');
    expect(res.body.error.details.issues).toEqual([{ path: ['rows', '1', 'participantCode'], message: `${other.code} is not a participant of your site` }]);
    expect(await auditCount(t)).toBe(before);
    expect(await outcomeState()).toEqual(stored);
  });

  it('when a measurement date is not a real calendar day, then 400 names the row and field, and nothing is written', async () => {
    const c = await withSpec(2);
    const before = await auditCount(t);
    const res = await c.statistician.put(url(c, '/outcomes')).send({
      outcomeKey: 'walk_final',
      rows: [{ participantCode: c.participants[0]!.code, value: 301, measuredOn: '2025-02-30' }],
    });
    expect(res.status).toBe(400);
    expect(res.body.error.details.issues).toContainEqual(expect.objectContaining({ path: ['rows', '0', 'measuredOn'], message: 'Not a real calendar date' }));
    expect(await auditCount(t)).toBe(before);
  });
});
