import type { DesignBodyInput } from '@counterpoise/contracts/design';
import { utcToday, addDays } from '@counterpoise/contracts/participants';
import { createStudy, createUser, signIn, type SignedInAgent, type TestContext } from '../../../test/harness.js';

export const today = () => utcToday();
export const daysAgo = (n: number) => addDays(utcToday(), -n);

export function trialDesign(overrides: Partial<DesignBodyInput> = {}): DesignBodyInput {
  return {
    targetSampleSize: 400,
    arms: [
      { code: 'A', name: 'Arm A', ratio: 1 },
      { code: 'B', name: 'Arm B', ratio: 1 },
    ],
    sites: [
      { code: 'S1', name: 'Site S1', enrollmentTarget: 200 },
      { code: 'S2', name: 'Site S2', enrollmentTarget: 200 },
    ],
    covariates: [
      { key: 'age', label: 'Age', kind: 'continuous', unit: 'years', min: 18, max: 100, decimals: 0 },
      { key: 'fev1_pct', label: 'FEV1 % predicted', kind: 'continuous', unit: '%', min: 10, max: 150, decimals: 1, isAdjustment: true },
      { key: 'sex', label: 'Sex', kind: 'categorical', levels: ['female', 'male'], isStratification: true },
      { key: 'smoker', label: 'Current smoker', kind: 'binary' },
      { key: 'bmi', label: 'BMI', kind: 'continuous', unit: 'kg/m2', min: 12, max: 70, decimals: 1, required: false, windowDaysBefore: 90 },
    ],
    screeningQuestions: [{ key: 'pregnant', label: 'Pregnant', kind: 'binary' }],
    eligibility: [
      { id: 'age40', kind: 'inclusion', label: 'Aged 40 or over', field: 'age', op: '>=', value: 40 },
      { id: 'notpreg', kind: 'exclusion', label: 'Pregnant', field: 'pregnant', op: '==', value: true },
    ],
    allocation: { method: 'permuted_blocks', blockSizes: [4, 6], stratifyBySite: true },
    ...overrides,
  };
}

export function baseline(over: Record<string, unknown> = {}) {
  const on = daysAgo(3);
  return {
    age: { value: 62, measuredOn: on },
    fev1_pct: { value: 55.5, measuredOn: on },
    sex: { value: 'female', measuredOn: on },
    smoker: { value: false, measuredOn: on },
    ...over,
  };
}

export function enrollBody(siteId: string, over: Record<string, unknown> = {}) {
  return {
    siteId,
    consent: { date: daysAgo(1), version: '2.0' },
    baseline: baseline(),
    screeningAnswers: { pregnant: false },
    ...over,
  };
}

export type Cast = {
  studyId: string;
  siteIds: string[];
  armIds: string[];
  admin: SignedInAgent;
  coordinator: SignedInAgent;
  otherCoordinator: SignedInAgent;
  statistician: SignedInAgent;
  sponsor: SignedInAgent;
  auditor: SignedInAgent;
  emails: Record<string, string>;
};

/** A study with a saved design and one user per role (the coordinator at S1, another at S2). */
export async function castStudy(
  t: TestContext,
  opts: { design?: DesignBodyInput; blinding?: 'blinded' | 'open_label'; kind?: 'randomized_trial' | 'observational_cohort' } = {},
): Promise<Cast> {
  const study = await createStudy(t, { blinding: opts.blinding ?? 'blinded', kind: opts.kind ?? 'randomized_trial', sites: ['S1', 'S2'], arms: ['A', 'B'] });
  const [s1, s2] = study.siteIds as [string, string];
  const users = {
    admin: await createUser(t, { isAdmin: true }),
    coordinator: await createUser(t, { memberships: [{ studyId: study.id, role: 'coordinator', siteIds: [s1] }] }),
    otherCoordinator: await createUser(t, { memberships: [{ studyId: study.id, role: 'coordinator', siteIds: [s2] }] }),
    statistician: await createUser(t, { memberships: [{ studyId: study.id, role: 'statistician' }] }),
    sponsor: await createUser(t, { memberships: [{ studyId: study.id, role: 'sponsor' }] }),
    auditor: await createUser(t, { memberships: [{ studyId: study.id, role: 'auditor' }] }),
  };
  const agents = Object.fromEntries(await Promise.all(Object.entries(users).map(async ([k, u]) => [k, await signIn(t, u.email)] as const))) as Record<
    keyof typeof users,
    SignedInAgent
  >;
  const res = await agents.statistician.put(`/api/studies/${study.id}/design`).send(opts.design ?? trialDesign());
  if (res.status !== 200) throw new Error(`design save failed: ${res.status} ${JSON.stringify(res.body)}`);
  return {
    studyId: study.id,
    siteIds: study.siteIds,
    armIds: study.armIds,
    ...agents,
    emails: Object.fromEntries(Object.entries(users).map(([k, u]) => [k, u.email])),
  };
}

export async function counts(t: TestContext) {
  const rows = await t.ownerQuery<{ participants: number; baseline: number; allocations: number; screenings: number; audit: number; docs: number; batches: number }>(
    `SELECT (SELECT count(*)::int FROM study) AS studies, (SELECT sum(design_version)::int FROM study) AS design_versions,
            (SELECT count(*)::int FROM membership) AS memberships, (SELECT count(*)::int FROM stratum_counter) AS strata,
            (SELECT count(*)::int FROM participant) AS participants, (SELECT count(*)::int FROM baseline_value) AS baseline,
            (SELECT count(*)::int FROM allocation) AS allocations, (SELECT count(*)::int FROM screening) AS screenings,
            (SELECT count(*)::int FROM audit_event) AS audit, (SELECT count(*)::int FROM consent_document) AS docs,
            (SELECT count(*)::int FROM import_batch) AS batches,
            (SELECT coalesce(sum(next_position), 0)::int FROM stratum_counter) AS slots,
            (SELECT max(updated_at) FROM baseline_value) AS last_value_change`,
  );
  return rows[0]!;
}
