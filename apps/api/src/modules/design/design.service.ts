import { randomBytes, createHash } from 'node:crypto';
import { ALLOCATION_ALGORITHM_VERSION } from '@counterpoise/stats';
import type { DesignBody, StudyCreateBody, StudyDetail } from '@counterpoise/contracts/design';
import type { EntityManager } from 'typeorm';
import type { AppContext } from '../../app-context.js';
import { inTransaction } from '../../db/transaction.js';
import { AppError, notFound } from '../../http/app-error.js';
import { appendAudit, type AuditActor } from '../audit/audit.service.js';
import type { StudyAccess } from '../policy/policy.js';
import { canSeeArms } from '../participants/visibility.js';
import { planStrata } from './strata-planner.js';
import { forgetDesign, loadDesign, type StoredAllocation, type StoredDesign, type StudyDesign } from './study-design.js';

type Queryable = Pick<EntityManager, 'query'>;

export async function createStudy(ctx: AppContext, actor: AuditActor & { isAdmin: boolean }, input: StudyCreateBody): Promise<string> {
  return inTransaction(ctx.ds, async (tx) => {
    const clash: unknown[] = await tx.query(`SELECT 1 FROM study WHERE code = $1`, [input.code]);
    if (clash.length) throw new AppError('conflict', `A study with code ${input.code} already exists`);
    const rows: { id: string }[] = await tx.query(
      `INSERT INTO study (code, title, kind, blinding, status, target_sample_size) VALUES ($1, $2, $3, $4, 'setup', $5) RETURNING id`,
      [input.code, input.title, input.kind, input.blinding, input.targetSampleSize],
    );
    const id = rows[0]!.id;
    // A statistician who creates a study becomes its statistician; administrators see every study anyway.
    if (!actor.isAdmin && actor.userId) {
      await tx.query(`INSERT INTO membership (user_id, study_id, role) VALUES ($1, $2, 'statistician')`, [actor.userId, id]);
    }
    await appendAudit(tx, actor, [
      { action: 'study.created', entityType: 'study', entityId: id, studyId: id, after: input },
      ...(!actor.isAdmin && actor.userId
        ? [{ action: 'membership.granted', entityType: 'membership', entityId: actor.userId, studyId: id, after: { role: 'statistician', studyId: id } }]
        : []),
    ]);
    return id;
  });
}

const sameJson = (a: unknown, b: unknown) => JSON.stringify(a) === JSON.stringify(b);
const schemeWithoutSeed = (a: StoredAllocation | null | undefined) => {
  if (!a) return null;
  const { seed: _s, algorithm: _a, algorithmVersion: _v, rngVersion: _r, ...rest } = a;
  return rest;
};
const fingerprint = (seed: string | undefined) => (seed ? createHash('sha256').update(seed).digest('hex').slice(0, 16) : null);

function algorithmOf(method: StoredAllocation['method']): Pick<StoredAllocation, 'algorithm' | 'algorithmVersion' | 'rngVersion'> {
  if (method === 'permuted_blocks') {
    return { algorithm: 'permuted-block', algorithmVersion: ALLOCATION_ALGORITHM_VERSION.permutedBlock, rngVersion: ALLOCATION_ALGORITHM_VERSION.rng };
  }
  if (method === 'minimization') {
    return { algorithm: 'minimization', algorithmVersion: ALLOCATION_ALGORITHM_VERSION.minimization, rngVersion: ALLOCATION_ALGORITHM_VERSION.rng };
  }
  return { algorithm: 'exposure-recorded', algorithmVersion: 'counterpoise-exposure/1' };
}

/** A readable summary for audit entries: no seed, and no arm names (those go in a separate, allocation-revealing entry). */
function designSummary(d: StudyDesign) {
  return {
    designVersion: d.designVersion,
    targetSampleSize: d.targetSampleSize,
    armCount: d.arms.length,
    armRatios: d.arms.map((a) => a.ratio),
    sites: d.sites.map(({ code, name, enrollmentTarget, status }) => ({ code, name, enrollmentTarget, status })),
    covariates: d.covariates.map(({ id: _id, position: _p, ...c }) => c),
    screeningQuestions: d.screeningQuestions,
    eligibility: d.eligibility,
    allocation: schemeWithoutSeed(d.allocation),
    seedFingerprint: fingerprint(d.allocation?.seed),
    alertRules: d.alertRules,
  };
}

const locked = (message: string) => new AppError('conflict', message);

/** Once anyone is enrolled, what would change earlier allocations or the meaning of stored values is frozen. */
function checkLockedParts(before: StudyDesign, input: DesignBody) {
  if (!sameJson(schemeWithoutSeed(before.allocation), input.allocation)) {
    throw locked('The allocation scheme cannot change once participants are enrolled');
  }
  const arms = (xs: { code: string; ratio: number }[]) => xs.map((a) => `${a.code}:${a.ratio}`).sort();
  if (!sameJson(arms(before.arms), arms(input.arms))) throw locked('Arms and their ratios cannot change once participants are enrolled');
  const byKey = new Map(input.covariates.map((c) => [c.key, c]));
  for (const c of before.covariates) {
    const next = byKey.get(c.key);
    if (!next) throw locked(`Covariate '${c.key}' cannot be removed once participants are enrolled`);
    if (next.kind !== c.kind) throw locked(`The type of covariate '${c.key}' cannot change once participants are enrolled`);
    if (next.isStratification !== c.isStratification) throw locked(`Stratification by '${c.key}' cannot change once participants are enrolled`);
    if (next.kind === 'categorical' && c.levels?.some((l) => !next.levels.includes(l))) {
      throw locked(`Levels of '${c.key}' cannot be removed once participants are enrolled`);
    }
  }
  for (const c of input.covariates) {
    if (c.isStratification && !before.covariates.some((b) => b.key === c.key)) {
      throw locked('A stratification factor cannot be added once participants are enrolled');
    }
  }
}

async function syncRows(
  tx: EntityManager,
  table: 'arm' | 'site' | 'covariate_definition',
  keyColumn: 'code' | 'key',
  studyId: string,
  keep: string[],
  inUse: string,
) {
  const gone: { id: string; k: string }[] = await tx.query(
    `SELECT id, ${keyColumn} AS k FROM ${table} WHERE study_id = $1 AND NOT (${keyColumn} = ANY($2::text[]))`,
    [studyId, keep],
  );
  for (const g of gone) {
    const used: unknown[] = await tx.query(inUse, [g.id]);
    if (used.length) throw locked(`'${g.k}' is in use and cannot be removed from the design`);
    await tx.query(`DELETE FROM ${table} WHERE id = $1`, [g.id]);
  }
}

/**
 * `opts.seed` fixes the allocation seed of a new scheme; only the invented demo uses it, so that
 * its story is the same on every machine. Everywhere else the server draws the seed.
 */
export async function saveDesign(
  ctx: AppContext,
  actor: AuditActor,
  studyId: string,
  input: DesignBody,
  opts: { seed?: string } = {},
): Promise<void> {
  await inTransaction(ctx.ds, async (tx) => {
    // FOR UPDATE waits for enrollments in flight (they hold FOR KEY SHARE) and blocks new ones until commit.
    const lockedRows: { kind: string; design: StoredDesign }[] = await tx.query(
      `SELECT kind, design FROM study WHERE id = $1 FOR UPDATE`,
      [studyId],
    );
    const row = lockedRows[0];
    if (!row) throw notFound('Study');
    const before = await loadDesign(tx, studyId);
    forgetDesign(studyId);
    const enrolled: { n: number }[] = await tx.query(
      `SELECT count(*)::int AS n FROM participant WHERE study_id = $1 AND status IN ('enrolled', 'withdrawn')`,
      [studyId],
    );
    const hasEnrolled = enrolled[0]!.n > 0;
    if (hasEnrolled && !input.reason) {
      throw new AppError('validation_failed', 'Give a reason: participants are already enrolled', {
        issues: [{ path: ['reason'], message: 'A reason is required once anyone is enrolled' }],
      });
    }
    if (hasEnrolled) checkLockedParts(before, input);
    const isTrial = row.kind === 'randomized_trial';
    if (isTrial === (input.allocation.method === 'exposure_recorded')) {
      throw new AppError('validation_failed', isTrial ? 'A randomized trial needs permuted blocks or minimization' : 'An observational cohort records the exposure', {
        issues: [{ path: ['allocation', 'method'], message: isTrial ? 'Choose permuted_blocks or minimization' : 'Use exposure_recorded' }],
      });
    }

    // The seed is made here, server-side, once; it stays with the study so the list can be reproduced.
    const seed = before.allocation?.seed && before.allocation.method === input.allocation.method ? before.allocation.seed : (opts.seed ?? randomBytes(16).toString('hex'));
    const allocation: StoredAllocation = { ...input.allocation, ...(input.allocation.method === 'exposure_recorded' ? {} : { seed }), ...algorithmOf(input.allocation.method) };
    const stored: StoredDesign = {
      screeningQuestions: input.screeningQuestions,
      eligibility: input.eligibility,
      allocation,
      alertRules: input.alertRules,
    };

    await syncRows(tx, 'arm', 'code', studyId, input.arms.map((a) => a.code),
      `SELECT 1 FROM allocation WHERE arm_id = $1 UNION ALL SELECT 1 FROM participant WHERE exposure_arm_id = $1 LIMIT 1`);
    await syncRows(tx, 'site', 'code', studyId, input.sites.map((s) => s.code),
      `SELECT 1 FROM participant WHERE site_id = $1 UNION ALL SELECT 1 FROM screening WHERE site_id = $1 LIMIT 1`);
    await syncRows(tx, 'covariate_definition', 'key', studyId, input.covariates.map((c) => c.key),
      `SELECT 1 FROM baseline_value WHERE covariate_id = $1 LIMIT 1`);
    for (const [i, a] of input.arms.entries()) {
      await tx.query(
        `INSERT INTO arm (study_id, code, name, ratio, position) VALUES ($1, $2, $3, $4, $5)
         ON CONFLICT (study_id, code) DO UPDATE SET name = EXCLUDED.name, ratio = EXCLUDED.ratio, position = EXCLUDED.position`,
        [studyId, a.code, a.name, a.ratio, i],
      );
    }
    for (const s of input.sites) {
      await tx.query(
        `INSERT INTO site (study_id, code, name, enrollment_target, status) VALUES ($1, $2, $3, $4, $5)
         ON CONFLICT (study_id, code) DO UPDATE SET name = EXCLUDED.name, enrollment_target = EXCLUDED.enrollment_target, status = EXCLUDED.status`,
        [studyId, s.code, s.name, s.enrollmentTarget, s.status],
      );
    }
    for (const [i, c] of input.covariates.entries()) {
      const cont = c.kind === 'continuous' ? c : null;
      await tx.query(
        `INSERT INTO covariate_definition (study_id, key, label, kind, unit, min_value, max_value, decimals, levels, required,
           window_days_before, window_days_after, is_stratification, is_adjustment, is_outcome_baseline, reliability, position)
         VALUES ($1, $2, $3, $4, $5, $6, $7, $8, $9, $10, $11, $12, $13, $14, $15, $16, $17)
         ON CONFLICT (study_id, key) DO UPDATE SET label = EXCLUDED.label, kind = EXCLUDED.kind, unit = EXCLUDED.unit,
           min_value = EXCLUDED.min_value, max_value = EXCLUDED.max_value, decimals = EXCLUDED.decimals, levels = EXCLUDED.levels,
           required = EXCLUDED.required, window_days_before = EXCLUDED.window_days_before, window_days_after = EXCLUDED.window_days_after,
           is_stratification = EXCLUDED.is_stratification, is_adjustment = EXCLUDED.is_adjustment,
           is_outcome_baseline = EXCLUDED.is_outcome_baseline, reliability = EXCLUDED.reliability, position = EXCLUDED.position`,
        [
          studyId, c.key, c.label, c.kind, cont?.unit ?? null, cont?.min ?? null, cont?.max ?? null, cont ? cont.decimals : null,
          c.kind === 'categorical' ? c.levels : null, c.required, c.windowDaysBefore, c.windowDaysAfter, c.isStratification,
          c.isAdjustment, c.isOutcomeBaseline, c.reliability ?? null, i,
        ],
      );
    }
    const firstSave = Object.keys(row.design ?? {}).length === 0;
    await tx.query(
      `UPDATE study SET design = $2, target_sample_size = $3, design_version = design_version + $4,
              status = CASE WHEN status = 'setup' THEN 'enrolling' ELSE status END, updated_at = now() WHERE id = $1`,
      [studyId, JSON.stringify(stored), input.targetSampleSize, firstSave ? 0 : 1],
    );
    forgetDesign(studyId);
    const after = await loadDesign(tx, studyId);
    forgetDesign(studyId);
    const armsChanged = !sameJson(before.arms.map(({ code, name, ratio }) => ({ code, name, ratio })), after.arms.map(({ code, name, ratio }) => ({ code, name, ratio })));
    await ctx.jobs.send(tx, 'balance.recompute', { studyId, reason: 'design saved' }, { singletonKey: studyId });
    await appendAudit(tx, actor, [
      {
        action: 'study.design_saved',
        entityType: 'study',
        entityId: studyId,
        studyId,
        before: firstSave ? null : designSummary(before),
        after: designSummary(after),
        reason: input.reason ?? null,
      },
      ...(armsChanged
        ? [{
            action: 'study.arms_saved',
            entityType: 'study',
            entityId: studyId,
            studyId,
            before: before.arms.map(({ code, name, ratio }) => ({ code, name, ratio })),
            after: after.arms.map(({ code, name, ratio }) => ({ code, name, ratio })),
            reason: input.reason ?? null,
            revealsAllocation: true,
          }]
        : []),
    ]);
  });
  forgetDesign(studyId);
}

export async function enrolledCount(q: Queryable, studyId: string, siteIds: string[] | null): Promise<number> {
  const rows: { n: number }[] = await q.query(
    `SELECT count(*)::int AS n FROM participant WHERE study_id = $1 AND status IN ('enrolled', 'withdrawn')
       AND ($2::uuid[] IS NULL OR site_id = ANY($2::uuid[]))`,
    [studyId, siteIds],
  );
  return rows[0]!.n;
}

/** The study as this reader may see it: arm names, seed, block sizes and planner only where the role allows. */
export async function studyDetail(ctx: AppContext, studyId: string, access: StudyAccess): Promise<StudyDetail> {
  const d = await loadDesign(ctx.ds, studyId);
  const designer = access.permissions.includes('study.design');
  const showArms = canSeeArms(access, d);
  let allocation: StudyDetail['allocation'] = null;
  if (d.allocation) {
    if (access.unblinded) allocation = d.allocation;
    else if (designer) allocation = schemeWithoutSeed(d.allocation) as StudyDetail['allocation'];
    // Sites must never learn block sizes or minimization settings (concealment).
    else allocation = { method: d.allocation.method, concealed: true };
  }
  const sites = access.siteIds ? d.sites.filter((s) => access.siteIds!.includes(s.id)) : d.sites;
  return {
    id: d.id,
    code: d.code,
    title: d.title,
    kind: d.kind,
    blinding: d.blinding,
    status: d.status,
    targetSampleSize: d.targetSampleSize,
    designVersion: d.designVersion,
    enrolled: await enrolledCount(ctx.ds, studyId, access.siteIds),
    arms: showArms ? d.arms.map(({ id, code, name, ratio }) => ({ id, code, name, ratio })) : null,
    armCount: d.arms.length,
    sites,
    covariates: d.covariates,
    screeningQuestions: d.screeningQuestions,
    eligibility: d.eligibility,
    allocation,
    alertRules: d.alertRules,
    strataPlan: designer
      ? planStrata({
          targetSampleSize: d.targetSampleSize,
          siteCount: d.sites.length,
          covariates: d.covariates,
          allocation: d.allocation,
        })
      : null,
    myRole: access.roles.join('+'),
    permissions: access.permissions,
    unblinded: access.unblinded,
    canSeeArms: showArms,
  };
}
