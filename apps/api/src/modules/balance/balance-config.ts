import { createHash } from 'node:crypto';
import { alertRulesSchema, type AlertRules } from '@counterpoise/contracts/design';
import type { Estimand } from '@counterpoise/stats';
import { z } from 'zod';

/** Anything that runs SQL: a DataSource, an EntityManager, a QueryRunner. */
export type Queryable = { query(sql: string, params?: unknown[]): Promise<unknown> };
export const rows = async <T>(db: Queryable, sql: string, params: unknown[] = []): Promise<T[]> =>
  (await db.query(sql, params)) as T[];

export type CovariateKind = 'continuous' | 'binary' | 'categorical';
export type CovariateInfo = {
  id: string;
  key: string;
  label: string;
  kind: CovariateKind;
  unit: string | null;
  levels: string[] | null;
  required: boolean;
  isAdjustment: boolean;
  isStratification: boolean;
  position: number;
};
export type ArmInfo = { id: string; code: string; name: string; position: number };
export type SiteInfo = { id: string; code: string; name: string; enrollmentTarget: number };

export type StudyConfig = {
  id: string;
  code: string;
  kind: 'randomized_trial' | 'observational_cohort';
  blinding: 'blinded' | 'open_label';
  designVersion: number;
  targetSampleSize: number;
  rules: AlertRules;
  /** Cohorts: the weighting estimand of the design (ATE when the design does not say). */
  estimand: Estimand | null;
  /** Ordered by position; the first is the reference arm of every comparison. */
  arms: ArmInfo[];
  sites: SiteInfo[];
  covariates: CovariateInfo[];
  /** Changes whenever covariate definitions, arms or sites change: the accumulators are then rebuilt. */
  fingerprint: string;
};

/** The 95% chance band of DOMAIN.md ("beyond what chance produces"). */
export const CHANCE_LEVEL = 0.95;

const designSchema = z
  .object({
    alertRules: alertRulesSchema.optional(),
    allocation: z
      .object({
        method: z.string(),
        weighting: z.object({ estimand: z.enum(['ATE', 'ATT', 'overlap']) }).optional(),
      })
      .passthrough()
      .optional(),
  })
  .passthrough();

export async function loadStudyConfig(db: Queryable, studyId: string): Promise<StudyConfig | null> {
  const [study] = await rows<{
    id: string;
    code: string;
    kind: StudyConfig['kind'];
    blinding: StudyConfig['blinding'];
    design_version: number;
    target_sample_size: number;
    design: unknown;
  }>(db, `SELECT id, code, kind, blinding, design_version, target_sample_size, design FROM study WHERE id = $1`, [studyId]);
  if (!study) return null;
  const arms = await rows<ArmInfo>(
    db,
    `SELECT id, code, name, position FROM arm WHERE study_id = $1 ORDER BY position, code`,
    [studyId],
  );
  const sites = await rows<SiteInfo>(
    db,
    `SELECT id, code, name, enrollment_target AS "enrollmentTarget" FROM site WHERE study_id = $1 ORDER BY code`,
    [studyId],
  );
  const covariates = await rows<CovariateInfo>(
    db,
    `SELECT id, key, label, kind, unit, levels, required, is_adjustment AS "isAdjustment",
            is_stratification AS "isStratification", position
       FROM covariate_definition WHERE study_id = $1 ORDER BY position, key`,
    [studyId],
  );
  // A malformed or older design falls back to the defaults rather than stopping monitoring.
  const parsed = designSchema.safeParse(study.design ?? {});
  const design = parsed.success ? parsed.data : {};
  const rules = alertRulesSchema.parse(design.alertRules ?? {});
  const estimand =
    study.kind === 'observational_cohort' ? (design.allocation?.weighting?.estimand ?? 'ATE') : null;
  const fingerprint = createHash('sha256')
    .update(
      JSON.stringify({
        kind: study.kind,
        arms: arms.map((a) => a.id),
        sites: sites.map((s) => s.id),
        covariates: covariates.map((c) => [c.id, c.key, c.kind, c.levels]),
      }),
    )
    .digest('hex');
  return {
    id: study.id,
    code: study.code,
    kind: study.kind,
    blinding: study.blinding,
    designVersion: study.design_version,
    targetSampleSize: study.target_sample_size,
    rules,
    estimand,
    arms,
    sites,
    covariates,
    fingerprint,
  };
}

const YES = new Set(['1', 'yes', 'y', 'true']);
const NO = new Set(['0', 'no', 'n', 'false']);

/**
 * The value a baseline row contributes, by covariate kind: a number (continuous; binary 0/1), a
 * level (categorical), or null (missing or not readable). Both the full rebuild (per group of
 * equal raw values) and the incremental path (per value) decode through this one function.
 */
export function codeValue(kind: CovariateKind, valueNumber: number | null, valueText: string | null): number | string | null {
  if (kind === 'continuous') return valueNumber !== null && Number.isFinite(valueNumber) ? valueNumber : null;
  if (kind === 'binary') {
    if (valueNumber === 0 || valueNumber === 1) return valueNumber;
    if (valueNumber === null && valueText !== null) {
      const t = valueText.trim().toLowerCase();
      if (YES.has(t)) return 1;
      if (NO.has(t)) return 0;
    }
    return null;
  }
  // A blank level is missing.
  if (valueText !== null && valueText !== '') return valueText;
  return valueNumber !== null ? String(valueNumber) : null;
}

/** SQL expression for the arm a participant `p` counts in: the allocation in a trial, the recorded exposure in a cohort. */
export const armSql = (kind: StudyConfig['kind']) => (kind === 'randomized_trial' ? 'a.arm_id' : 'p.exposure_arm_id');

/**
 * Who is in the baseline figures: enrolled and withdrawn participants with an arm. Withdrawn
 * participants stay (intention-to-treat: the baseline table describes everyone randomized).
 */
export const COUNTED_STATUSES = ['enrolled', 'withdrawn'] as const;
export const isCounted = (status: string | null) => status === 'enrolled' || status === 'withdrawn';
