import type {
  AlertRules,
  AllocationScheme,
  CovariateDto,
  EligibilityCriterion,
  ScreeningQuestion,
} from '@counterpoise/contracts/design';
import { defaultAlertRules } from '@counterpoise/contracts/design';
import type { EntityManager } from 'typeorm';
import { notFound } from '../../http/app-error.js';

type Queryable = Pick<EntityManager, 'query'>;

/** The stored scheme: what the statistician chose plus what reproduces it. */
export type StoredAllocation = AllocationScheme & { seed?: string; algorithm?: string; algorithmVersion?: string; rngVersion?: string };

/** What lives in `study.design` (arms, sites and covariates have their own tables). */
export type StoredDesign = {
  screeningQuestions?: ScreeningQuestion[];
  eligibility?: EligibilityCriterion[];
  allocation?: StoredAllocation;
  alertRules?: AlertRules;
};

export type ArmRecord = { id: string; code: string; name: string; ratio: number; position: number };
export type SiteRecord = { id: string; code: string; name: string; enrollmentTarget: number; status: 'active' | 'paused' | 'closed' };

export type StudyDesign = {
  id: string;
  code: string;
  title: string;
  kind: 'randomized_trial' | 'observational_cohort';
  blinding: 'blinded' | 'open_label';
  status: 'setup' | 'enrolling' | 'closed';
  targetSampleSize: number;
  designVersion: number;
  arms: ArmRecord[];
  sites: SiteRecord[];
  covariates: CovariateDto[];
  screeningQuestions: ScreeningQuestion[];
  eligibility: EligibilityCriterion[];
  allocation: StoredAllocation | null;
  alertRules: AlertRules;
};

// Designs change rarely and enrollments read them constantly: cache by the study row's
// updated_at, which every design save sets (other processes' saves included).
const cache = new Map<string, { stamp: string; design: StudyDesign }>();

/** `lock: true` takes FOR KEY SHARE on the study row, so a design save (FOR UPDATE) waits for this transaction. */
export async function loadDesign(q: Queryable, studyId: string, opts: { lock?: boolean } = {}): Promise<StudyDesign> {
  const rows: (Omit<StudyDesign, 'arms' | 'sites' | 'covariates' | 'screeningQuestions' | 'eligibility' | 'allocation' | 'alertRules'> & {
    design: StoredDesign;
    updatedAt: string;
  })[] = await q.query(
    `SELECT id, code, title, kind, blinding, status, target_sample_size AS "targetSampleSize",
            design_version AS "designVersion", design, updated_at::text AS "updatedAt" FROM study WHERE id = $1${opts.lock ? ' FOR KEY SHARE' : ''}`,
    [studyId],
  );
  const s = rows[0];
  if (!s) throw notFound('Study');
  const stamp = `${s.updatedAt}|${s.designVersion}|${s.status}|${s.targetSampleSize}`;
  const cached = cache.get(studyId);
  if (cached && cached.stamp === stamp) return cached.design;
  // Sequential: inside a transaction these share one connection.
  const arms: ArmRecord[] = await q.query(`SELECT id, code, name, ratio, position FROM arm WHERE study_id = $1 ORDER BY position, code`, [studyId]);
  const sites: SiteRecord[] = await q.query(
      `SELECT id, code, name, enrollment_target AS "enrollmentTarget", status FROM site WHERE study_id = $1 ORDER BY code`,
      [studyId],
  );
  const covariates: CovariateDto[] = await q.query(
      `SELECT id, key, label, kind, unit, min_value AS min, max_value AS max, decimals, levels, required,
              window_days_before AS "windowDaysBefore", window_days_after AS "windowDaysAfter",
              is_stratification AS "isStratification", is_adjustment AS "isAdjustment",
              is_outcome_baseline AS "isOutcomeBaseline", reliability, position
         FROM covariate_definition WHERE study_id = $1 ORDER BY position, key`,
      [studyId],
  );
  const design: StudyDesign = {
    id: s.id,
    code: s.code,
    title: s.title,
    kind: s.kind,
    blinding: s.blinding,
    status: s.status,
    targetSampleSize: s.targetSampleSize,
    designVersion: s.designVersion,
    arms,
    sites,
    covariates,
    screeningQuestions: s.design.screeningQuestions ?? [],
    eligibility: s.design.eligibility ?? [],
    allocation: s.design.allocation ?? null,
    alertRules: s.design.alertRules ?? defaultAlertRules,
  };
  cache.set(studyId, { stamp, design });
  return design;
}

/** Called after a design save commits (and in tests that change designs behind the API's back). */
export function forgetDesign(studyId: string): void {
  cache.delete(studyId);
}
