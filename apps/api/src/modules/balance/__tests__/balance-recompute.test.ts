import {
  categoricalSmd,
  smdChanceBand,
  standardizedMeanDifference,
  summarize,
  varianceRatio,
} from '@counterpoise/stats';
import type { BalanceArmsView } from '@counterpoise/contracts/balance';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createTestContext, type TestContext } from '../../../test/harness.js';
import { armsText, latestHead } from '../balance.service.js';
import { recomputeBalance } from '../balance-recompute.job.js';
import {
  correct,
  createBalanceStudy,
  enqueue,
  enroll,
  normal,
  readCounted,
  rng,
  runJob,
  withdraw,
  type BalanceStudy,
  type Enrollee,
  type StoredRow,
} from './balance-fixtures.js';

/*
 * The snapshot must equal what the stats functions give when called directly on the rows read
 * back from the database (the functions are themselves checked against numpy/scipy fixtures in
 * packages/stats). Binary and categorical values are decoded here independently of the API.
 */

const COVS = [
  { key: 'age', kind: 'continuous' as const },
  { key: 'fev1', kind: 'continuous' as const },
  { key: 'smoker', kind: 'binary' as const },
  { key: 'region', kind: 'categorical' as const, levels: ['north', 'south', 'east'] },
];

function decode(kind: string, v: { n: number | null; t: string | null } | undefined): number | string | null {
  if (!v) return null;
  if (kind === 'continuous') return v.n;
  if (kind === 'binary') {
    if (v.n === 0 || v.n === 1) return v.n;
    if (v.t === 'yes') return 1;
    if (v.t === 'no') return 0;
    return null;
  }
  return v.t ?? (v.n === null ? null : String(v.n));
}

function close(actual: number | null, expected: number, what: string, tol = 1e-9): void {
  expect(actual, what).not.toBeNull();
  const delta = Math.abs((actual as number) - expected);
  expect(delta, `${what}: expected ${expected}, got ${actual}, delta ${delta}`).toBeLessThanOrEqual(tol * Math.max(1, Math.abs(expected)));
}

async function latest(t: TestContext, study: BalanceStudy): Promise<{ body: BalanceArmsView; kind: string; sites: Map<string, BalanceArmsView> }> {
  const [s] = await t.ownerQuery<{ id: string; result: BalanceArmsView; kind: string }>(
    `SELECT id, result, kind FROM balance_snapshot WHERE study_id = $1 ORDER BY computed_at DESC LIMIT 1`,
    [study.id],
  );
  // Site views are rebuilt from the stored accumulators, as GET /balance?site= does.
  const head = (await latestHead(t.ctx.ds, study.id))!;
  const sites = new Map<string, BalanceArmsView>();
  for (const siteId of study.siteIds) sites.set(siteId, JSON.parse((await armsText(t.ctx.ds, study.id, siteId, head))!) as BalanceArmsView);
  return { body: s!.result, kind: s!.kind, sites };
}

/** Checks one scope's covariates against a direct computation on `rows`. */
function checkScope(study: BalanceStudy, view: BalanceArmsView, rows: StoredRow[], withQuantiles: boolean, label: string): number {
  let checked = 0;
  const ref = study.armIds[0]!;
  for (const cov of study.covariates) {
    const got = view.covariates.find((c) => c.key === cov.key)!;
    const valuesOf = (arm: string) =>
      rows.filter((r) => r.armId === arm).map((r) => decode(cov.kind, r.values.get(cov.key))).filter((x) => x !== null);
    for (const [i, armId] of study.armIds.entries()) {
      const s = got.balance.byArm.find((b) => b.armId === armId)!.summary;
      const vals = valuesOf(armId);
      const people = rows.filter((r) => r.armId === armId).length;
      expect(s.n, `${label} ${cov.key} n arm ${i}`).toBe(vals.length);
      expect(s.missing, `${label} ${cov.key} missing arm ${i}`).toBe(people - vals.length);
      if (cov.kind === 'continuous' && vals.length >= 2) {
        const direct = summarize(vals as number[]);
        close(s.mean, direct.mean, `${label} ${cov.key} mean arm ${i}`);
        close(s.sd, direct.sd!, `${label} ${cov.key} sd arm ${i}`);
        if (withQuantiles) {
          close(s.median, direct.median, `${label} ${cov.key} median arm ${i}`);
          close(s.q1, direct.q1, `${label} ${cov.key} q1 arm ${i}`);
          close(s.q3, direct.q3, `${label} ${cov.key} q3 arm ${i}`);
        }
      }
      if (cov.kind === 'categorical') {
        for (const lv of s.levels!) expect(lv.n, `${label} ${cov.key}=${lv.level}`).toBe(vals.filter((v) => v === lv.level).length);
      }
    }
    for (const cmp of got.balance.comparisons) {
      const a = valuesOf(cmp.armId);
      const r = valuesOf(ref);
      expect(cmp.nArm).toBe(a.length);
      expect(cmp.nReference).toBe(r.length);
      if (a.length < 2 || r.length < 2) continue;
      let expected: number;
      if (cov.kind === 'categorical') expected = categoricalSmd(a as string[], r as string[]);
      else expected = standardizedMeanDifference(a as number[], r as number[], { kind: cov.kind });
      close(cmp.smd, expected, `${label} ${cov.key} SMD ${cmp.armId.slice(0, 4)}`);
      if (cov.kind === 'continuous') {
        close(cmp.varianceRatio, varianceRatio(a as number[], r as number[]), `${label} ${cov.key} VR`);
      }
      const band = smdChanceBand(a.length, r.length);
      close(cmp.chanceBand!.halfWidth, band.halfWidth, `${label} ${cov.key} band`);
      expect(cmp.flags.smdOverThreshold).toBe(Math.abs(expected) > 0.1);
      expect(cmp.flags.beyondChance).toBe(Math.abs(expected) > band.halfWidth);
      checked++;
    }
  }
  return checked;
}

function person(r: () => number, sites: number, arms: number, shift = 0): Enrollee {
  const arm = Math.floor(r() * arms);
  const region = ['north', 'south', 'east'][Math.floor(r() * 3)]!;
  return {
    site: Math.floor(r() * sites),
    arm,
    values: {
      age: Math.round(normal(r, 62 + shift * arm, 9) * 10) / 10,
      fev1: r() < 0.1 ? null : normal(r, 1.9, 0.5),
      // Some binary values arrive as text, as an import might send them.
      smoker: r() < 0.3 ? (r() < 0.4 ? 'yes' : 'no') : r() < 0.35 ? 1 : 0,
      region,
    },
  };
}

describe('balance.recompute job', () => {
  let t: TestContext;
  beforeAll(async () => {
    t = await createTestContext();
  });
  afterAll(async () => {
    await t.close();
  });

  it('when a random sequence of imports, enrollments, corrections, withdrawals and site moves is processed incrementally, then every snapshot equals a direct computation from the stored rows', async () => {
    const study = await createBalanceStudy(t, { sites: ['S1', 'S2', 'S3'], covariates: COVS });
    const r = rng(20260501);
    const ids: string[] = [];
    ids.push(...(await enroll(t, study, Array.from({ length: 60 }, () => person(r, 3, 2)))));
    await enqueue(t, study.id, 'import');
    await runJob(t, { studyId: study.id, reason: 'import' });
    const kinds: string[] = [];
    let checked = 0;
    for (let step = 0; step < 14; step++) {
      const op = step % 7;
      if (op === 0) ids.push(...(await enroll(t, study, [person(r, 3, 2)])));
      else if (op === 1) await correct(t, study, ids[Math.floor(r() * ids.length)]!, 'age', Math.round(normal(r, 60, 10)));
      else if (op === 2) await withdraw(t, ids[Math.floor(r() * ids.length)]!);
      else if (op === 3) await correct(t, study, ids[Math.floor(r() * ids.length)]!, 'fev1', null);
      else if (op === 4) {
        const id = ids[Math.floor(r() * ids.length)]!;
        await correct(t, study, id, 'region', 'east');
        await correct(t, study, id, 'smoker', 'yes');
        await correct(t, study, id, 'region', 'south');
      } else if (op === 5) {
        await t.ownerQuery(`UPDATE participant SET site_id = $2, updated_at = now() WHERE id = $1`, [
          ids[Math.floor(r() * ids.length)]!,
          study.siteIds[Math.floor(r() * 3)],
        ]);
      } else {
        // A participant screened (not counted) and one import batch of five.
        await enroll(t, study, [{ ...person(r, 3, 2), status: 'screened' }]);
        ids.push(...(await enroll(t, study, Array.from({ length: 5 }, () => person(r, 3, 2)))));
      }
      await runJob(t, { studyId: study.id, reason: 'change' });
      const snap = await latest(t, study);
      kinds.push(snap.kind);
      const stored = await readCounted(t, study);
      expect(snap.body.snapshot.enrolledCount).toBe(stored.length);
      checked += checkScope(study, snap.body, stored, true, `step ${step} overall`);
      for (const siteId of study.siteIds) {
        const siteView = snap.sites.get(siteId)!;
        checked += checkScope(study, siteView, stored.filter((x) => x.siteId === siteId), false, `step ${step} site`);
        // The stored grid (sites an incremental run did not touch are carried over) matches the site view.
        const row = snap.body.siteGrid!.find((g) => g.siteId === siteId)!;
        expect(row.nByArm).toEqual(siteView.site!.nByArm);
        for (const cell of row.cells) {
          const cov = siteView.covariates.find((c) => c.key === cell.key)!;
          expect(cell.comparisons.map((c) => c.smd)).toEqual(cov.balance.comparisons.map((c) => c.smd));
        }
      }
    }
    expect(kinds.filter((k) => k === 'incremental').length).toBeGreaterThan(5);
    expect(checked).toBeGreaterThan(100);
    // The change log is consumed, and a rebuild from all rows gives the same accumulators.
    const [{ n: left }] = (await t.ownerQuery<{ n: number }>(`SELECT count(*)::int AS n FROM balance_change WHERE study_id = $1`, [study.id])) as [{ n: number }];
    expect(left).toBe(0);
    const before = await t.ownerQuery<{ k: string; state: { n: number; mean: number; m2: number } }>(
      `SELECT site_id::text || arm_id::text || covariate_key || '|' || level AS k, state FROM balance_accumulator WHERE study_id = $1 ORDER BY 1`,
      [study.id],
    );
    await runJob(t, { studyId: study.id, reason: 'manual', full: true });
    const after = await t.ownerQuery<{ k: string; state: { n: number; mean: number; m2: number } }>(
      `SELECT site_id::text || arm_id::text || covariate_key || '|' || level AS k, state FROM balance_accumulator WHERE study_id = $1 ORDER BY 1`,
      [study.id],
    );
    expect(after.map((a) => a.k)).toEqual(before.map((b) => b.k));
    after.forEach((a, i) => {
      expect(a.state.n).toBe(before[i]!.state.n);
      close(before[i]!.state.mean, a.state.mean, `mean ${a.k}`, 1e-9);
      close(before[i]!.state.m2, a.state.m2, `m2 ${a.k}`, 1e-7);
    });
  });

  it('when participants and their values are inserted by one flagged statement, then their values are not logged one by one, the flag is cleared for the next statement, and the incremental snapshot still equals the stored rows', async () => {
    const study = await createBalanceStudy(t, { sites: ['S1', 'S2'], covariates: COVS });
    const r = rng(20261202);
    const ids = await enroll(t, study, Array.from({ length: 30 }, () => person(r, 2, 2)));
    await enqueue(t, study.id, 'import');
    await runJob(t, { studyId: study.id, reason: 'import' });
    const existing = ids[0]!;
    const logged = await t.ctx.ds.transaction(async (tx) => {
      // The shape of the enrollment statement: participants and their values together, flagged.
      const [fresh] = (await tx.query(
        `WITH p AS (
           INSERT INTO participant (study_id, site_id, code, status, enrolled_at) VALUES ($1, $2, 'FLAGGED-1', 'enrolled', now()) RETURNING id
         ), flag AS (SELECT set_config('counterpoise.values_of_new_participants', 'on', true) AS on)
         , a AS (INSERT INTO allocation (participant_id, study_id, arm_id, stratum_key, position, kit_code, algorithm, algorithm_version, design_version)
                 SELECT p.id, $1, $3, 'flagged', 1, 'K-FLAGGED-1', 'test', '1', 1 FROM p)
         , b AS (INSERT INTO baseline_value (participant_id, covariate_id, value_number, value_text, measured_on)
                 SELECT p.id, v.cov, v.num, v.txt, current_date FROM p CROSS JOIN flag
                   CROSS JOIN unnest($4::uuid[], $5::float8[], $6::text[]) AS v(cov, num, txt))
         SELECT id FROM p`,
        [study.id, study.siteIds[1], study.armIds[1], study.covariates.map((c) => c.id), [71, 2.2, 1, null], [null, null, null, 'east']],
      )) as [{ id: string }];
      // A later statement in the same transaction: a value for a participant counted before.
      await tx.query(
        `UPDATE baseline_value SET value_number = value_number + 5, updated_at = now() WHERE participant_id = $1 AND covariate_id = $2`,
        [existing, study.covariates[0]!.id],
      );
      await tx.query(
        `INSERT INTO baseline_value (participant_id, covariate_id, value_number, value_text, measured_on) VALUES ($1, $2, 3.3, NULL, current_date)
         ON CONFLICT (participant_id, covariate_id) DO UPDATE SET value_number = EXCLUDED.value_number`,
        [existing, study.covariates[1]!.id],
      );
      const [flag] = (await tx.query(`SELECT current_setting('counterpoise.values_of_new_participants', true) AS v`)) as [{ v: string }];
      const rowsLogged = (await tx.query(
        `SELECT participant_id, source FROM balance_change WHERE study_id = $1 ORDER BY id`,
        [study.id],
      )) as { participant_id: string; source: string }[];
      return { fresh: fresh.id, flag: flag.v, rowsLogged };
    });
    expect(logged.flag).toBe('off');
    const forFresh = logged.rowsLogged.filter((x) => x.participant_id === logged.fresh).map((x) => x.source);
    expect(forFresh.sort()).toEqual(['allocation', 'participant']);
    expect(logged.rowsLogged.filter((x) => x.participant_id === existing).map((x) => x.source)).toEqual(['baseline', 'baseline']);
    await runJob(t, { studyId: study.id, reason: 'change' });
    const snap = await latest(t, study);
    expect(snap.kind).toBe('incremental');
    const stored = await readCounted(t, study);
    expect(stored).toHaveLength(31);
    expect(checkScope(study, snap.body, stored, true, 'flagged overall')).toBeGreaterThanOrEqual(COVS.length);
  });

  it('when the design changes (a new version with a new covariate), then the next run rebuilds from all rows and includes the covariate', async () => {
    const study = await createBalanceStudy(t, { sites: ['S1', 'S2'], covariates: COVS });
    const r = rng(12);
    const ids = await enroll(t, study, Array.from({ length: 30 }, () => person(r, 2, 2)));
    await runJob(t, { studyId: study.id, reason: 'import' });
    await enroll(t, study, [person(r, 2, 2)]);
    await runJob(t, { studyId: study.id, reason: 'enrollment' });
    expect((await latest(t, study)).kind).toBe('incremental');
    const [cov] = await t.ownerQuery<{ id: string }>(
      `INSERT INTO covariate_definition (study_id, key, label, kind, position, required) VALUES ($1, 'bmi', 'BMI', 'continuous', 9, true) RETURNING id`,
      [study.id],
    );
    study.covariates.push({ key: 'bmi', kind: 'continuous', id: cov!.id });
    for (const [i, id] of ids.entries()) await correct(t, study, id, 'bmi', 20 + (i % 7));
    await t.ownerQuery(`UPDATE study SET design_version = design_version + 1 WHERE id = $1`, [study.id]);
    await runJob(t, { studyId: study.id, reason: 'change' });
    const snap = await latest(t, study);
    expect(snap.kind).toBe('full');
    expect(snap.body.snapshot.designVersion).toBe(2);
    checkScope(study, snap.body, await readCounted(t, study), true, 'after design change');
  });

  it('when a study has three arms, then each arm is compared with the first (reference) arm and the snapshot says so', async () => {
    const study = await createBalanceStudy(t, { sites: ['S1', 'S2'], arms: ['A', 'B', 'C'], covariates: COVS });
    const r = rng(77);
    await enroll(t, study, Array.from({ length: 90 }, () => person(r, 2, 3, 2)));
    await runJob(t, { studyId: study.id, reason: 'import' });
    const snap = await latest(t, study);
    expect(snap.body.referenceArmId).toBe(study.armIds[0]);
    expect(snap.body.comparisonNote).toMatch(/pairwise with the reference arm A/);
    for (const c of snap.body.covariates) expect(c.balance.comparisons.map((x) => x.armId)).toEqual(study.armIds.slice(1));
    checkScope(study, snap.body, await readCounted(t, study), true, '3 arms');
  });
});

describe('medians and quartiles of a large study', () => {
  let t: TestContext;
  beforeAll(async () => {
    t = await createTestContext();
  });
  afterAll(async () => {
    await t.close();
  });

  it('when a study is above the every-run limit, then incremental runs carry the quantiles over, a full rebuild queues a quantile run, and that run brings them up to date', async () => {
    const study = await createBalanceStudy(t, { sites: ['S1', 'S2'], covariates: COVS });
    const r = rng(31);
    await enroll(t, study, Array.from({ length: 40 }, () => person(r, 2, 2)));
    const small = { hooks: { quantilesEveryRunUpTo: 10 } };
    await recomputeBalance(t.ctx, { studyId: study.id, reason: 'import' }, small);
    const first = await latest(t, study);
    checkScope(study, first.body, await readCounted(t, study), true, 'first run');

    // An outlier enrolled: the incremental run updates the moments but keeps the old medians.
    await enroll(t, study, [{ site: 0, arm: 0, values: { age: 140, fev1: 2, smoker: 0, region: 'north' } }, { site: 0, arm: 0, values: { age: 141, fev1: 2, smoker: 0, region: 'north' } }]);
    await recomputeBalance(t.ctx, { studyId: study.id, reason: 'enrollment' }, small);
    const carried = await latest(t, study);
    expect(carried.kind).toBe('incremental');
    expect(carried.body.snapshot.quantilesComputedAt).toBe(first.body.snapshot.quantilesComputedAt);
    const arm0 = (v: BalanceArmsView) => v.covariates.find((c) => c.key === 'age')!.balance.byArm[0]!.summary;
    expect(arm0(carried.body).median).toBe(arm0(first.body).median);
    expect(arm0(carried.body).n).toBe(arm0(first.body).n + 2);

    await recomputeBalance(t.ctx, { studyId: study.id, reason: 'manual', full: true }, small);
    const queued = (await t.ctx.ds.query(
      `SELECT data FROM pgboss.job WHERE name = 'balance.recompute' AND singleton_key = $1 AND state = 'created'`,
      [`quantiles:${study.id}`],
    )) as { data: { quantiles: boolean } }[];
    expect(queued.map((q) => q.data.quantiles)).toEqual([true]);
    await recomputeBalance(t.ctx, queued[0]!.data as unknown as { studyId: string; quantiles: boolean }, small);
    const refreshed = await latest(t, study);
    expect(refreshed.body.snapshot.quantilesComputedAt > first.body.snapshot.quantilesComputedAt).toBe(true);
    checkScope(study, refreshed.body, await readCounted(t, study), true, 'after the quantile run');
  });
});
