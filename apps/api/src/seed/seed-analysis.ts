import type { AnalysisSpec } from '@counterpoise/contracts/analysis';
import { addDays, utcToday } from '@counterpoise/contracts/participants';
import { createRng, type Rng } from '@counterpoise/stats';
import type { DataSource } from 'typeorm';
import { inTransaction } from '../db/transaction.js';
import { appendAudit, type AuditActor, type AuditEntry } from '../modules/audit/audit.service.js';
import { checkSpecAgainstDesign, suggestSpec } from '../modules/analysis/analysis-spec.service.js';
import { loadDesign } from '../modules/design/study-design.js';

/*
 * Demo analysis data of the invented KESTREL trial: the six-minute walk distance at week 12 for
 * each enrolled participant whose week-12 visit has passed (a few missed it), generated from the
 * baseline walk with a modest programme effect, and a draft specification (not locked, so the
 * demo statistician can review and sign it). All numbers are invented.
 */

const SEED_ACTOR: AuditActor = { userId: null, email: 'seed@counterpoise.local', role: 'system', requestId: 'seed' };
const OUTCOME_KEY = 'six_mwd_wk12';

function normal(rng: Rng, mean: number, sd: number): number {
  const u = 1 - rng.next();
  const v = rng.next();
  return mean + sd * Math.sqrt(-2 * Math.log(u)) * Math.cos(2 * Math.PI * v);
}

/** Idempotent: does nothing when KESTREL already has a specification, or has no participants yet. */
export async function seedAnalysis(ds: DataSource): Promise<{ created: boolean; detail: string }> {
  const [study]: { id: string }[] = await ds.query(`SELECT id FROM study WHERE code = 'KESTREL'`);
  if (!study) return { created: false, detail: 'analysis demo skipped: study KESTREL does not exist yet' };
  const [specs]: { n: number }[] = await ds.query(`SELECT count(*)::int AS n FROM analysis_spec WHERE study_id = $1`, [study.id]);
  if (specs!.n > 0) return { created: false, detail: 'analysis demo already present' };
  const design = await loadDesign(ds, study.id);
  const people: { id: string; code: string; site_id: string; arm: string; enrolled_on: string; walk: number | null; age: number | null }[] = await ds.query(
    `SELECT p.id, p.code, p.site_id, a2.code AS arm, to_char(p.enrolled_at AT TIME ZONE 'UTC', 'YYYY-MM-DD') AS enrolled_on,
            (SELECT bv.value_number FROM baseline_value bv JOIN covariate_definition c ON c.id = bv.covariate_id
              WHERE bv.participant_id = p.id AND c.key = 'six_mwd') AS walk,
            (SELECT bv.value_number FROM baseline_value bv JOIN covariate_definition c ON c.id = bv.covariate_id
              WHERE bv.participant_id = p.id AND c.key = 'age') AS age
       FROM participant p JOIN allocation a ON a.participant_id = p.id JOIN arm a2 ON a2.id = a.arm_id
      WHERE p.study_id = $1 AND p.status IN ('enrolled', 'withdrawn') ORDER BY p.code`,
    [study.id],
  );
  if (people.length === 0 || !design.covariates.some((c) => c.key === 'six_mwd')) {
    return { created: false, detail: 'analysis demo skipped: KESTREL has no enrolled participants (or no six-minute walk covariate) yet' };
  }
  const suggested = suggestSpec(design);
  const spec: AnalysisSpec = {
    ...suggested,
    outcome: { key: OUTCOME_KEY, label: 'Six-minute walk distance at week 12', unit: 'm' },
    baselineCovariateKey: 'six_mwd',
    covariates: suggested.covariates.filter((c) => c.key !== 'six_mwd'),
  };
  checkSpecAgainstDesign(spec, design);

  const rng = createRng('counterpoise-demo/KESTREL/outcomes/v1');
  const today = utcToday();
  const rows: { id: string; code: string; siteId: string; value: number; on: string }[] = [];
  for (const p of people) {
    const visit = addDays(p.enrolled_on, 84);
    const u = rng.next();
    if (visit > today || p.walk === null || p.age === null || u < 0.04) continue;
    // Week-12 walk tracks the baseline walk (slope about 0.85), declines with age, +22 m with the programme.
    const value = 70 + 0.85 * p.walk - 0.9 * (p.age - 65) + (p.arm === 'HBW' ? 22 : 0) + normal(rng, 0, 38);
    rows.push({ id: p.id, code: p.code, siteId: p.site_id, value: Math.round(Math.max(30, value)), on: visit });
  }

  await inTransaction(ds, async (tx) => {
    const [row]: { id: string }[] = await tx.query(
      `INSERT INTO analysis_spec (study_id, version, spec, status) VALUES ($1, 1, $2, 'draft') RETURNING id`,
      [study.id, JSON.stringify(spec)],
    );
    await tx.query(
      `INSERT INTO outcome_value (participant_id, outcome_key, value, measured_on)
       SELECT u.pid, $1, u.value, u.measured_on FROM unnest($2::uuid[], $3::float8[], $4::date[]) AS u(pid, value, measured_on)`,
      [OUTCOME_KEY, rows.map((r) => r.id), rows.map((r) => r.value), rows.map((r) => r.on)],
    );
    const entries: AuditEntry[] = [
      { action: 'analysis.spec_created', entityType: 'analysis_spec', entityId: row!.id, studyId: study.id, after: { version: 1, status: 'draft', spec } },
      ...rows.map((r) => ({
        action: 'outcome.recorded',
        entityType: 'outcome_value',
        entityId: `${r.id}:${OUTCOME_KEY}`,
        studyId: study.id,
        siteId: r.siteId,
        after: { participantCode: r.code, outcomeKey: OUTCOME_KEY, value: r.value, measuredOn: r.on },
      })),
    ];
    await appendAudit(tx, SEED_ACTOR, entries);
  });
  return { created: true, detail: `KESTREL: draft analysis specification and ${rows.length} week-12 outcomes of ${people.length} participants` };
}
