import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createTestContext, type TestContext } from '../../../test/harness.js';
import { castStudy, counts, daysAgo, type Cast } from './fixtures.js';

let t: TestContext;
let c: Cast;
beforeAll(async () => {
  t = await createTestContext();
  c = await castStudy(t);
});
afterAll(async () => t.close());

const HEADER = ['participant_ref', 'site', 'enrollment_date', 'consent_date', 'consent_version', 'age', 'age_date', 'fev1_pct', 'fev1_pct_date', 'sex', 'sex_date', 'smoker', 'smoker_date', 'pregnant'];
function row(i: number, over: Partial<Record<string, string>> = {}): string[] {
  const d = daysAgo(2);
  const v: Record<string, string> = {
    participant_ref: `REF-${i}`, site: 'S1', enrollment_date: daysAgo(1), consent_date: daysAgo(2), consent_version: '2.0',
    age: String(40 + (i % 40)), age_date: d, fev1_pct: (30 + (i % 50) + 0.5).toFixed(1), fev1_pct_date: d,
    sex: i % 2 ? 'female' : 'male', sex_date: d, smoker: i % 3 ? 'no' : 'yes', smoker_date: d, pregnant: 'no', ...over,
  };
  return HEADER.map((h) => v[h]!);
}
const csv = (rows: string[][], delimiter = ',', bom = false) =>
  Buffer.from(`${bom ? '\uFEFF' : ''}${[HEADER, ...rows].map((r) => r.join(delimiter)).join('\r\n')}\r\n`, 'utf8');

const upload = (mode: 'preview' | 'commit', file: Buffer, name = 'participants.csv', who = () => c.coordinator) =>
  who().post(`/api/studies/${c.studyId}/participants/import?mode=${mode}`).attach('file', file, name);

describe('POST /studies/:studyId/participants/import', () => {
  it('when one row among 3,000 is bad, then preview and commit name the row and field, and commit writes nothing', async () => {
    const rows = Array.from({ length: 3000 }, (_, i) => row(i));
    rows[1776] = row(1776, { fev1_pct: '55.55', sex: 'unknown' });
    const file = csv(rows);
    const before = await counts(t);
    const preview = await upload('preview', file);
    expect(preview.status, JSON.stringify(preview.body).slice(0, 500)).toBe(200);
    expect(preview.body.report).toMatchObject({ rowCount: 3000, validRows: 2999, imported: 0 });
    // Row numbers count the header as line 1.
    expect(preview.body.report.errors).toEqual([
      { row: 1778, field: 'fev1_pct', message: 'FEV1 % predicted allows at most 1 decimal place' },
      { row: 1778, field: 'sex', message: 'Sex: choose one of female, male' },
    ]);
    const commit = await upload('commit', file);
    expect(commit.status).toBe(400);
    expect(commit.body.error.message).toMatch(/1 row\(s\) have problems; nothing was imported/);
    expect(commit.body.error.details.report.errors).toHaveLength(2);
    expect(await counts(t)).toEqual(before);
  });

  it('when a valid file is committed, then every row is enrolled and allocated in file order, with one audit entry per participant and one for the batch; committing it again adds nothing', async () => {
    const rows = Array.from({ length: 120 }, (_, i) => row(10_000 + i));
    const file = csv(rows, ';', true);
    const before = await counts(t);
    const res = await upload('commit', file);
    expect(res.status, JSON.stringify(res.body).slice(0, 800)).toBe(201);
    expect(res.body.report).toMatchObject({ delimiter: ';', rowCount: 120, imported: 120, alreadyImported: false });
    const after = await counts(t);
    expect(after.participants - before.participants).toBe(120);
    expect(after.allocations - before.allocations).toBe(120);
    expect(after.baseline - before.baseline).toBe(120 * 4);
    expect(after.batches - before.batches).toBe(1);
    const actions = await t.ownerQuery<{ action: string; n: number; reveals: boolean }>(
      `SELECT action, count(*)::int AS n, bool_or(reveals_allocation) AS reveals FROM audit_event WHERE seq > (SELECT max(seq) - $1 FROM audit_event) GROUP BY action ORDER BY action`,
      [after.audit - before.audit],
    );
    expect(actions).toEqual([
      { action: 'allocation.assigned_batch', n: 1, reveals: true },
      { action: 'import.committed', n: 1, reveals: false },
      { action: 'participant.enrolled', n: 120, reveals: false },
    ]);
    // File order: within each stratum, positions follow the row order.
    const order = await t.ownerQuery<{ import_key: string; stratum_key: string; position: number }>(
      `SELECT p.import_key, a.stratum_key, a.position FROM allocation a JOIN participant p ON p.id = a.participant_id WHERE p.import_key LIKE 'REF-1%' AND length(p.import_key) = 9 ORDER BY a.stratum_key, a.position`,
    );
    const byStratum = new Map<string, number[]>();
    for (const o of order) byStratum.set(o.stratum_key, [...(byStratum.get(o.stratum_key) ?? []), Number(o.import_key.slice(4))]);
    for (const refs of byStratum.values()) expect(refs).toEqual([...refs].sort((a, b) => a - b));

    const again = await upload('commit', file);
    expect(again.status).toBe(200);
    expect(again.body.report).toMatchObject({ alreadyImported: true, imported: 0 });
    // A different file that repeats 20 references adds only the new rows.
    const overlap = csv([...rows.slice(0, 20), row(20_000), row(20_001)]);
    const third = await upload('commit', overlap);
    expect(third.body.report).toMatchObject({ imported: 2, skippedExisting: 20 });
    const final = await counts(t);
    expect(final.participants - after.participants).toBe(2);
  });

  it('when the file is not UTF-8, then it is refused with a plain reason and nothing is written', async () => {
    const before = await counts(t);
    const latin1 = Buffer.concat([csv([row(1)]).subarray(0, 40), Buffer.from([0xe9, 0x0d, 0x0a])]);
    const res = await upload('commit', latin1);
    expect(res.status).toBe(415);
    expect(res.body.error.message).toMatch(/not (valid )?UTF-8/);
    const utf16 = Buffer.concat([Buffer.from([0xff, 0xfe]), Buffer.from(csv([row(1)]).toString('utf16le'))]);
    const res16 = await upload('commit', utf16);
    expect(res16.status).toBe(415);
    expect(res16.body.error.message).toMatch(/UTF-16/);
    expect(await counts(t)).toEqual(before);
  });

  it('when the header has an unknown or missing column, then the report names it at row 1', async () => {
    const bad = Buffer.from(`participant_ref,site,age,age_date,colour\nX,S1,50,${daysAgo(1)},red\n`);
    const res = await upload('preview', bad);
    expect(res.status).toBe(200);
    const fields = res.body.report.errors.map((e: { row: number; field: string }) => `${e.row}:${e.field}`);
    expect(fields).toEqual(expect.arrayContaining(['1:colour', '1:fev1_pct', '1:sex', '1:smoker']));
  });

  it('when a coordinator imports rows of another site, then each such row is refused and nothing is written', async () => {
    const before = await counts(t);
    const res = await upload('commit', csv([row(30_000), row(30_001, { site: 'S2' })]));
    expect(res.status).toBe(400);
    expect(res.body.error.details.report.errors).toEqual([{ row: 3, field: 'site', message: 'You can only import participants of your own sites (not S2)' }]);
    expect(await counts(t)).toEqual(before);
  });

  it('when a tab-separated file is previewed with a progress id, then progress can be polled to done', async () => {
    const res = await c.coordinator
      .post(`/api/studies/${c.studyId}/participants/import?mode=preview&progressId=abcdef123456`)
      .attach('file', csv([row(40_000), row(40_001)], '\t'), 'p.tsv');
    expect(res.body.report).toMatchObject({ delimiter: 'tab', rowCount: 2, errors: [] });
    const p = await c.coordinator.get(`/api/studies/${c.studyId}/participants/import/progress/abcdef123456`);
    expect(p.body.progress).toEqual({ phase: 'done', rowsProcessed: 2, totalRows: 2 });
    const other = await c.otherCoordinator.get(`/api/studies/${c.studyId}/participants/import/progress/abcdef123456`);
    expect(other.status).toBe(404);
  });
});

describe('GET /studies/:studyId/participants/export.csv', () => {
  it('when a blinded coordinator exports, then there is no arm column and formula-like cells are neutralised', async () => {
    await upload('commit', csv([row(50_000, { consent_version: '=HYPERLINK("x")' })]));
    const res = await c.coordinator.get(`/api/studies/${c.studyId}/participants/export.csv`);
    expect(res.status).toBe(200);
    const [header] = res.text.split('\n');
    expect(header).toMatch(/^STUDYID,USUBJID,SITEID,STATUS,RFICDTC,ENRLDT,KITCODE,AGE,AGE_DT/);
    expect(header).not.toMatch(/ARM/);
    expect(res.text).not.toMatch(/Arm A|Arm B/);
    expect(res.text).not.toMatch(/,-S2-/);
    const stat = await c.statistician.get(`/api/studies/${c.studyId}/participants/export.csv`);
    expect(stat.text.split('\n')[0]).toMatch(/KITCODE,ARMCD,ARM,/);
    expect(stat.text).toMatch(/,(A|B),Arm (A|B),/);
  });
});
