import { evaluateEligibility, type ScreeningBody, type ScreeningDto } from '@counterpoise/contracts/participants';
import type { AppContext } from '../../app-context.js';
import { inTransaction } from '../../db/transaction.js';
import { AppError } from '../../http/app-error.js';
import { appendAudit, type AuditActor } from '../audit/audit.service.js';
import { loadDesign, type StudyDesign } from '../design/study-design.js';
import { randomCode } from './allocation.service.js';
import type { Issue } from './enrollment.service.js';

/** Checks each answer's type (and range or level for covariates) before the criteria are evaluated. */
export function checkAnswers(design: StudyDesign, answers: Record<string, unknown>): Issue[] {
  const issues: Issue[] = [];
  const covs = new Map(design.covariates.map((c) => [c.key, c]));
  const questions = new Map(design.screeningQuestions.map((q) => [q.key, q]));
  for (const [key, v] of Object.entries(answers)) {
    const c = covs.get(key);
    const q = questions.get(key);
    const path = ['answers', key];
    if (c) {
      if (c.kind === 'continuous') {
        if (typeof v !== 'number') issues.push({ path, message: `${c.label} must be a number` });
        else if ((c.min !== null && v < c.min) || (c.max !== null && v > c.max)) {
          issues.push({ path, message: `${c.label} must be between ${c.min} and ${c.max}${c.unit ? ` ${c.unit}` : ''}` });
        }
      } else if (c.kind === 'binary' && typeof v !== 'boolean') issues.push({ path, message: `${c.label} must be yes or no` });
      else if (c.kind === 'categorical' && !c.levels?.includes(String(v))) {
        issues.push({ path, message: `${c.label}: choose one of ${c.levels?.join(', ')}` });
      }
    } else if (q) {
      if (q.kind === 'binary' && typeof v !== 'boolean') issues.push({ path, message: `${q.label} must be yes or no` });
      if (q.kind === 'number' && typeof v !== 'number') issues.push({ path, message: `${q.label} must be a number` });
      if (q.kind === 'choice' && q.levels && !q.levels.includes(String(v))) {
        issues.push({ path, message: `${q.label}: choose one of ${q.levels.join(', ')}` });
      }
    } else issues.push({ path, message: 'Not a question of this study' });
  }
  for (const crit of design.eligibility) {
    if (!(crit.field in answers)) issues.push({ path: ['answers', crit.field], message: `Answer '${crit.field}' to check "${crit.label}"` });
  }
  return issues;
}

/**
 * Screens a candidate: evaluates the eligibility criteria, keeps the screening log entry with
 * the failed criteria, and registers the candidate (status screened or screen_failed) under
 * a random code.
 */
export async function screen(ctx: AppContext, actor: AuditActor, studyId: string, input: ScreeningBody): Promise<ScreeningDto> {
  const design = await loadDesign(ctx.ds, studyId);
  const site = design.sites.find((s) => s.id === input.siteId);
  if (!site) throw new AppError('validation_failed', 'This site does not belong to the study', { issues: [{ path: ['siteId'], message: 'Unknown site' }] });
  if (site.status !== 'active') throw new AppError('conflict', `Site ${site.code} is ${site.status} and not screening`);
  if (!design.allocation) throw new AppError('precondition_failed', 'The study design is not complete yet');
  const issues = checkAnswers(design, input.answers);
  if (issues.length) throw new AppError('validation_failed', 'Some screening answers are not valid', { issues });
  const { eligible, failed } = evaluateEligibility(design.eligibility, input.answers);
  return inTransaction(ctx.ds, async (tx) => {
    let participant: { id: string; code: string } | null = null;
    for (let attempt = 0; !participant && attempt < 5; attempt++) {
      const rows: { id: string; code: string }[] = await tx.query(
        `INSERT INTO participant (study_id, site_id, code, status, screened_at) VALUES ($1, $2, $3, $4, now())
         ON CONFLICT (study_id, code) DO NOTHING RETURNING id, code`,
        [studyId, site.id, `${design.code}-${site.code}-${randomCode(6)}`, eligible ? 'screened' : 'screen_failed'],
      );
      participant = rows[0] ?? null;
    }
    if (!participant) throw new AppError('internal', 'Could not generate a unique participant code');
    const rows: { id: string; screened_at: Date }[] = await tx.query(
      `INSERT INTO screening (study_id, site_id, participant_id, screened_by, answers, eligible, failed_criteria)
       VALUES ($1, $2, $3, $4, $5, $6, $7) RETURNING id, screened_at`,
      [studyId, site.id, participant.id, actor.userId, JSON.stringify(input.answers), eligible, JSON.stringify(failed)],
    );
    const screening = rows[0]!;
    await appendAudit(tx, actor, [
      {
        action: eligible ? 'participant.screened' : 'participant.screen_failed',
        entityType: 'participant',
        entityId: participant.id,
        studyId,
        siteId: site.id,
        after: { code: participant.code, site: site.code, screeningId: screening.id, eligible, failedCriteria: failed, answers: input.answers },
      },
    ]);
    return {
      id: screening.id,
      siteId: site.id,
      siteCode: site.code,
      screenedAt: new Date(screening.screened_at).toISOString(),
      screenedBy: actor.email,
      eligible,
      failedCriteria: failed,
      participant,
    };
  });
}

export async function listScreenings(
  ctx: AppContext,
  studyId: string,
  siteIds: string[] | null,
  q: { siteId?: string; eligible?: 'true' | 'false'; page: number; pageSize: number },
): Promise<{ items: ScreeningDto[]; total: number }> {
  const params: unknown[] = [studyId, siteIds, q.siteId ?? null, q.eligible === undefined ? null : q.eligible === 'true'];
  const where = `s.study_id = $1 AND ($2::uuid[] IS NULL OR s.site_id = ANY($2::uuid[])) AND ($3::uuid IS NULL OR s.site_id = $3)
                 AND ($4::boolean IS NULL OR s.eligible = $4)`;
  const total: { n: number }[] = await ctx.ds.query(`SELECT count(*)::int AS n FROM screening s WHERE ${where}`, params);
  const rows: (Omit<ScreeningDto, 'screenedAt' | 'participant'> & { screenedAt: Date; pid: string | null; pcode: string | null })[] =
    await ctx.ds.query(
      `SELECT s.id, s.site_id AS "siteId", st.code AS "siteCode", s.screened_at AS "screenedAt", u.email AS "screenedBy",
              s.eligible, s.failed_criteria AS "failedCriteria", p.id AS pid, p.code AS pcode
         FROM screening s JOIN site st ON st.id = s.site_id LEFT JOIN app_user u ON u.id = s.screened_by
         LEFT JOIN participant p ON p.id = s.participant_id
        WHERE ${where} ORDER BY s.screened_at DESC, s.id LIMIT $5 OFFSET $6`,
      [...params, q.pageSize, (q.page - 1) * q.pageSize],
    );
  return {
    total: total[0]!.n,
    items: rows.map(({ pid, pcode, ...r }) => ({
      ...r,
      screenedAt: new Date(r.screenedAt).toISOString(),
      participant: pid && pcode ? { id: pid, code: pcode } : null,
    })),
  };
}
