import { createHash } from 'node:crypto';
import {
  analysisNote,
  lockSignatureMeaning,
  type AnalysisSpec,
  type Caution,
  type Completeness,
  type LockBody,
  type SpecDto,
  type SpecPutBody,
  type SpecResponse,
} from '@counterpoise/contracts/analysis';
import bcrypt from 'bcryptjs';
import type { EntityManager } from 'typeorm';
import type { AppContext } from '../../app-context.js';
import { inTransaction } from '../../db/transaction.js';
import { AppError } from '../../http/app-error.js';
import { appendAudit, type AuditActor } from '../audit/audit.service.js';
import { loadDesign, type StudyDesign } from '../design/study-design.js';
import type { Actor } from '../policy/policy.js';
import * as C from './analysis-cautions.js';
import { covariateTiming, firstLocked, isExploratory, ittCount, ITT_STATUSES, specVersions, stratificationFactors } from './analysis-data.js';

type Queryable = Pick<EntityManager, 'query'>;

const issue = (path: (string | number)[], message: string) =>
  new AppError('validation_failed', message, { issues: [{ path: path.map(String), message }] });

/** A starting specification from the design's flags: the baseline of the outcome, the adjustment covariates, the strata. */
export function suggestSpec(design: StudyDesign): AnalysisSpec {
  const base = design.covariates.find((c) => c.isOutcomeBaseline && c.kind === 'continuous') ?? null;
  return {
    outcome: base
      ? { key: `${base.key.slice(0, 34)}_final`, label: `${base.label} at follow-up`, unit: base.unit }
      : { key: 'primary_outcome', label: 'Primary outcome', unit: null },
    baselineCovariateKey: base?.key ?? null,
    covariates: design.covariates
      .filter((c) => c.isAdjustment && c.key !== base?.key)
      .map((c) => ({ key: c.key, form: c.kind === 'categorical' ? ('categorical' as const) : ('linear' as const) })),
    includeStratificationFactors: true,
    alpha: 0.05,
  };
}

/** The specification must name the study's own covariates, each in a form its kind allows. */
export function checkSpecAgainstDesign(spec: AnalysisSpec, design: StudyDesign): void {
  const issues: { path: string[]; message: string }[] = [];
  if (spec.baselineCovariateKey) {
    const c = design.covariates.find((x) => x.key === spec.baselineCovariateKey);
    if (!c) issues.push({ path: ['spec', 'baselineCovariateKey'], message: `The study has no covariate '${spec.baselineCovariateKey}'` });
    else if (c.kind !== 'continuous') issues.push({ path: ['spec', 'baselineCovariateKey'], message: `'${c.label}' is ${c.kind}; the baseline of the outcome must be continuous` });
  }
  spec.covariates.forEach((sc, i) => {
    const c = design.covariates.find((x) => x.key === sc.key);
    if (!c) issues.push({ path: ['spec', 'covariates', String(i), 'key'], message: `The study has no covariate '${sc.key}'` });
    else if ((c.kind === 'categorical') !== (sc.form === 'categorical')) {
      issues.push({
        path: ['spec', 'covariates', String(i), 'form'],
        message: c.kind === 'categorical' ? `'${c.label}' is categorical: use the form 'categorical'` : `'${c.label}' is ${c.kind}: use the form 'linear'`,
      });
    }
  });
  if (design.covariates.some((c) => c.key === spec.outcome.key)) {
    issues.push({ path: ['spec', 'outcome', 'key'], message: `'${spec.outcome.key}' is a baseline covariate; give the outcome its own key` });
  }
  if (issues.length) throw new AppError('validation_failed', 'The specification does not match the study design', { issues });
}

/** Canonical JSON (keys sorted) so the signed hash does not depend on key order. */
function canonical(v: unknown): string {
  if (Array.isArray(v)) return `[${v.map(canonical).join(',')}]`;
  if (v !== null && typeof v === 'object') {
    return `{${Object.keys(v)
      .sort()
      .map((k) => `${JSON.stringify(k)}:${canonical((v as Record<string, unknown>)[k])}`)
      .join(',')}}`;
  }
  return JSON.stringify(v);
}
export const specContentHash = (studyId: string, version: number, spec: AnalysisSpec) =>
  createHash('sha256').update(canonical({ studyId, version, spec })).digest('hex');

/** Outcomes recorded of the analysis population, by site; `siteIds` limits it to those sites (site staff). */
export async function completeness(q: Queryable, studyId: string, outcomeKey: string, siteIds: string[] | null = null): Promise<Completeness> {
  const rows: { site_code: string; site_name: string; eligible: number; recorded: number }[] = await q.query(
    `SELECT s.code AS site_code, s.name AS site_name, count(p.id)::int AS eligible, count(o.participant_id)::int AS recorded
       FROM site s
       LEFT JOIN participant p ON p.site_id = s.id AND p.status IN ${ITT_STATUSES}
       LEFT JOIN outcome_value o ON o.participant_id = p.id AND o.outcome_key = $2
      WHERE s.study_id = $1 AND ($3::uuid[] IS NULL OR s.id = ANY($3::uuid[]))
      GROUP BY s.code, s.name ORDER BY s.code`,
    [studyId, outcomeKey, siteIds],
  );
  const eligible = rows.reduce((s, r) => s + r.eligible, 0);
  const recorded = rows.reduce((s, r) => s + r.recorded, 0);
  return {
    outcomeKey,
    eligible,
    recorded,
    missing: eligible - recorded,
    bySite: rows.map((r) => ({ siteCode: r.site_code, siteName: r.site_name, eligible: r.eligible, recorded: r.recorded })),
  };
}

/** Cautions that can be judged before any outcome is analysed (shown in the editor). */
export function specCautions(
  design: StudyDesign,
  spec: AnalysisSpec,
  timing: Map<string, { recorded: number; after: number }>,
  itt: number,
  versions: SpecDto[],
  current: SpecDto | null,
): Caution[] {
  const out: Caution[] = [];
  const push = (c: Caution | null) => {
    if (c) out.push(c);
  };
  const factors = stratificationFactors(design);
  if (current && isExploratory(versions, current)) {
    push(C.changedAfterLock({ firstLockedVersion: firstLocked(versions)?.version ?? null, version: current.version, reason: null }));
  }
  const keys = [...C.specCovariateKeys(spec), ...(spec.includeStratificationFactors ? factors.filter((f) => !f.isSite).map((f) => f.key) : [])];
  const label = (k: string) => design.covariates.find((c) => c.key === k)?.label ?? k;
  const blocked = [...new Set(keys)].filter((k) => (timing.get(k)?.after ?? 0) > 0);
  push(C.postRandomization(blocked.map((k) => ({ key: k, label: label(k), count: timing.get(k)!.after })), design.kind, 'spec'));
  push(C.strataLeftOut(factors, spec, blocked));
  // Parameters: one per arm, one per linear covariate, levels - 1 per categorical factor or site.
  const columnsOf = (k: string) => {
    if (k === 'site') return Math.max(design.sites.length - 1, 0);
    const c = design.covariates.find((x) => x.key === k);
    return c?.kind === 'categorical' ? Math.max((c.levels?.length ?? 2) - 1, 1) : 1;
  };
  const allKeys = [...new Set([...C.specCovariateKeys(spec), ...(spec.includeStratificationFactors ? factors.map((f) => f.key) : [])])];
  if (itt > 0) push(C.tooManyParameters(design.arms.length + allKeys.reduce((s, k) => s + columnsOf(k), 0), itt));
  push(C.observationalGroups(design.kind, null));
  push(
    C.reliability(
      allKeys
        .map((k) => design.covariates.find((c) => c.key === k))
        .filter((c) => c?.kind === 'continuous')
        .map((c) => ({ label: c!.label, reliability: c!.reliability })),
      design.kind,
    ),
  );
  push(C.thresholdEnrollment(design, allKeys));
  return out;
}

export async function getSpec(ctx: AppContext, studyId: string): Promise<SpecResponse> {
  const design = await loadDesign(ctx.ds, studyId);
  const versions = await specVersions(ctx.ds, studyId);
  const current = versions.at(-1) ?? null;
  const timing = await covariateTiming(ctx.ds, studyId);
  const itt = await ittCount(ctx.ds, studyId);
  const suggestion = suggestSpec(design);
  const first = firstLocked(versions);
  return {
    current,
    versions: versions.map((v) => ({ version: v.version, status: v.status, updatedAt: v.updatedAt, signature: v.signature })),
    firstLockedVersion: first?.version ?? null,
    nextRunExploratory: current ? isExploratory(versions, current) : true,
    context: {
      studyKind: design.kind,
      covariates: design.covariates.map((c) => ({
        key: c.key,
        label: c.label,
        kind: c.kind,
        unit: c.unit,
        isStratification: c.isStratification,
        isAdjustment: c.isAdjustment,
        isOutcomeBaseline: c.isOutcomeBaseline,
        reliability: c.reliability,
        measuredAfterRandomization: timing.get(c.key)?.after ?? 0,
        recorded: timing.get(c.key)?.recorded ?? 0,
      })),
      stratificationFactors: stratificationFactors(design).map((f) => ({ key: f.key, label: f.label })),
      eligibilityThresholds: design.eligibility
        .filter((e) => ['<', '<=', '>', '>='].includes(e.op))
        .map((e) => ({ id: e.id, label: e.label, field: e.field, op: e.op, value: e.value })),
      itt,
    },
    suggestion,
    cautions: specCautions(design, current?.spec ?? suggestion, timing, itt, versions, current),
    completeness: current ? await completeness(ctx.ds, studyId, current.spec.outcome.key) : null,
    note: analysisNote,
  };
}

/** Saves the specification: a draft is edited in place; a locked version is never changed, a new version is drafted. */
export async function putSpec(ctx: AppContext, actor: AuditActor & { userId: string }, studyId: string, input: SpecPutBody): Promise<SpecDto> {
  const design = await loadDesign(ctx.ds, studyId);
  checkSpecAgainstDesign(input.spec, design);
  return inTransaction(ctx.ds, async (tx) => {
    await tx.query(`SELECT id FROM study WHERE id = $1 FOR UPDATE`, [studyId]);
    const versions = await specVersions(tx, studyId);
    const latest = versions.at(-1);
    if (latest && !input.reason) throw issue(['reason'], 'Give a reason for changing the analysis specification');
    let id: string;
    let action: string;
    let version: number;
    if (!latest || latest.status === 'locked') {
      version = (latest?.version ?? 0) + 1;
      const [row]: { id: string }[] = await tx.query(
        `INSERT INTO analysis_spec (study_id, version, spec, status, created_by) VALUES ($1, $2, $3, 'draft', $4) RETURNING id`,
        [studyId, version, JSON.stringify(input.spec), actor.userId],
      );
      id = row!.id;
      action = latest ? 'analysis.spec_new_version_after_lock' : 'analysis.spec_created';
    } else {
      version = latest.version;
      id = latest.id;
      await tx.query(`UPDATE analysis_spec SET spec = $2, updated_at = now() WHERE id = $1`, [id, JSON.stringify(input.spec)]);
      action = 'analysis.spec_updated';
    }
    await appendAudit(tx, actor, [
      {
        action,
        entityType: 'analysis_spec',
        entityId: id,
        studyId,
        before: latest ? { version: latest.version, status: latest.status, spec: latest.spec } : null,
        after: { version, status: 'draft', spec: input.spec },
        reason: input.reason ?? null,
      },
    ]);
    const saved = (await specVersions(tx, studyId)).find((v) => v.id === id)!;
    return saved;
  });
}

/**
 * Locks the current version with an electronic signature (21 CFR 11.50, 11.200): the password is
 * re-entered as the second component besides the session; the printed name, UTC time, meaning
 * and a hash of the signed content are stored and shown with the record.
 */
export async function lockSpec(ctx: AppContext, actor: Actor, auditActor: AuditActor, studyId: string, input: LockBody): Promise<SpecDto> {
  const [user]: { password_hash: string | null; display_name: string; status: string }[] = await ctx.ds.query(
    `SELECT password_hash, display_name, status FROM app_user WHERE id = $1`,
    [actor.userId],
  );
  const ok = user?.password_hash ? await bcrypt.compare(input.password, user.password_hash) : false;
  if (!ok || user?.status !== 'active') throw issue(['password'], 'The password is not correct; the specification was not signed');
  const design = await loadDesign(ctx.ds, studyId);
  return inTransaction(ctx.ds, async (tx) => {
    await tx.query(`SELECT id FROM study WHERE id = $1 FOR UPDATE`, [studyId]);
    const versions = await specVersions(tx, studyId);
    const current = versions.at(-1);
    if (!current) throw new AppError('precondition_failed', 'There is no analysis specification to lock yet');
    if (current.version !== input.version) {
      throw new AppError('conflict', `The current specification is version ${current.version}, not ${input.version}; review it before signing`);
    }
    if (current.status === 'locked') throw new AppError('conflict', `Version ${current.version} is already locked`);
    checkSpecAgainstDesign(current.spec, design);
    const sha = specContentHash(studyId, current.version, current.spec);
    await tx.query(
      `UPDATE analysis_spec SET status = 'locked', locked_at = now(), locked_by = $2, signer_name = $3, signature_meaning = $4,
              signed_content_sha256 = $5, updated_at = now()
        WHERE id = $1`,
      [current.id, actor.userId, user.display_name, lockSignatureMeaning, sha],
    );
    const locked = (await specVersions(tx, studyId)).find((v) => v.id === current.id)!;
    await appendAudit(tx, auditActor, [
      {
        action: 'analysis.spec_locked',
        entityType: 'analysis_spec',
        entityId: current.id,
        studyId,
        before: { version: current.version, status: 'draft' },
        after: { version: current.version, status: 'locked', signature: locked.signature },
      },
    ]);
    return locked;
  });
}
