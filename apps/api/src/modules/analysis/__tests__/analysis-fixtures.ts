import { randomUUID } from 'node:crypto';
import type { AnalysisSpec } from '@counterpoise/contracts/analysis';
import { createStudy, createUser, signIn, type SignedInAgent, type TestContext } from '../../../test/harness.js';

/**
 * Test data for the analysis: a two-arm trial (or cohort) written as the database owner, the way
 * enrollment would leave it, with one signed-in user per role. The numbers are generated; the
 * checks compare the API with direct calls of @counterpoise/stats on the same stored rows.
 */

export type Cast = {
  studyId: string;
  siteIds: string[];
  armIds: string[];
  covariateIds: Record<string, string>;
  participants: { id: string; code: string; site: number; arm: number; outcome: number }[];
  statistician: SignedInAgent;
  coordinator: SignedInAgent;
  otherCoordinator: SignedInAgent;
  admin: SignedInAgent;
  sponsor: SignedInAgent;
  auditor: SignedInAgent;
  statisticianId: string;
};

/** mulberry32: small, seeded, so a failure can be replayed. */
export function rng(seed: number): () => number {
  let a = seed >>> 0;
  return () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let x = a;
    x = Math.imul(x ^ (x >>> 15), x | 1);
    x ^= x + Math.imul(x ^ (x >>> 7), x | 61);
    return ((x ^ (x >>> 14)) >>> 0) / 4294967296;
  };
}
export const gauss = (r: () => number) => Math.sqrt(-2 * Math.log(Math.max(r(), 1e-12))) * Math.cos(2 * Math.PI * r());

const isoDaysAgo = (d: number) => new Date(Date.now() - d * 86_400_000).toISOString().slice(0, 10);

export const baseSpec = (over: Partial<AnalysisSpec> = {}): AnalysisSpec => ({
  outcome: { key: 'walk_final', label: 'Walk distance at week 12', unit: 'm' },
  baselineCovariateKey: 'walk_base',
  covariates: [{ key: 'age', form: 'linear' }],
  includeStratificationFactors: true,
  alpha: 0.05,
  ...over,
});

export async function castAnalysisStudy(
  t: TestContext,
  opts: {
    n?: number;
    kind?: 'randomized_trial' | 'observational_cohort';
    seed?: number;
    eligibility?: Record<string, unknown>[];
    /** Arm-specific slopes on the baseline (equal by default). */
    slopes?: [number, number];
  } = {},
): Promise<Cast> {
  const kind = opts.kind ?? 'randomized_trial';
  const n = opts.n ?? 60;
  const study = await createStudy(t, {
    kind,
    blinding: kind === 'randomized_trial' ? 'blinded' : 'open_label',
    sites: ['S1', 'S2'],
    arms: ['HBW', 'UC'],
    design: {
      allocation: kind === 'randomized_trial' ? { method: 'permuted_blocks', blockSizes: [4], stratifyBySite: true } : { method: 'exposure_recorded', weighting: { estimand: 'ATE' } },
      eligibility: opts.eligibility ?? [],
    },
  });
  const defs = [
    { key: 'walk_base', label: 'Walk distance at baseline', kind: 'continuous', unit: 'm', out: true, adj: false, strat: false, rel: 0.9, levels: null },
    { key: 'age', label: 'Age', kind: 'continuous', unit: 'years', out: false, adj: true, strat: false, rel: null, levels: null },
    { key: 'sex', label: 'Sex', kind: 'categorical', unit: null, out: false, adj: false, strat: kind === 'randomized_trial', rel: null, levels: ['female', 'male'] },
    { key: 'fev1', label: 'FEV1 % predicted', kind: 'continuous', unit: '%', out: false, adj: false, strat: false, rel: null, levels: null },
  ];
  const covariateIds: Record<string, string> = {};
  for (const [i, d] of defs.entries()) {
    const [row] = await t.ownerQuery<{ id: string }>(
      `INSERT INTO covariate_definition (study_id, key, label, kind, unit, levels, position, is_outcome_baseline, is_adjustment, is_stratification, reliability)
       VALUES ($1, $2, $3, $4, $5, $6, $7, $8, $9, $10, $11) RETURNING id`,
      [study.id, d.key, d.label, d.kind, d.unit, d.levels, i, d.out, d.adj, d.strat, d.rel],
    );
    covariateIds[d.key] = row!.id;
  }
  const r = rng(opts.seed ?? 7);
  const participants: Cast['participants'] = [];
  const slopes = opts.slopes ?? [0.8, 0.8];
  for (let i = 0; i < n; i++) {
    const id = randomUUID();
    const site = i % 2;
    const arm = Math.floor(i / 2) % 2;
    const code = `P${String(i + 1).padStart(3, '0')}`;
    // In a cohort the exposed group starts lower (pre-existing difference).
    const walkBase = 380 + 70 * gauss(r) - (kind === 'observational_cohort' && arm === 0 ? 40 : 0);
    const age = 64 + 8 * gauss(r);
    const sex = r() < 0.5 ? 'female' : 'male';
    const fev1 = 55 + 12 * gauss(r);
    await t.ownerQuery(
      `INSERT INTO participant (id, study_id, site_id, code, status, enrolled_at, exposure_arm_id) VALUES ($1, $2, $3, $4, 'enrolled', now() - interval '30 days', $5)`,
      [id, study.id, study.siteIds[site], code, kind === 'observational_cohort' ? study.armIds[arm] : null],
    );
    if (kind === 'randomized_trial') {
      await t.ownerQuery(
        `INSERT INTO allocation (participant_id, study_id, arm_id, stratum_key, position, kit_code, algorithm, algorithm_version, design_version, allocated_at)
         VALUES ($1, $2, $3, $4, $5, $6, 'test', '1', 1, now() - interval '30 days')`,
        [id, study.id, study.armIds[arm], `site=${site}`, i, `K${i}-${id.slice(0, 6)}`],
      );
    }
    const on = isoDaysAgo(32);
    for (const [key, v] of [['walk_base', walkBase], ['age', age], ['fev1', fev1]] as const) {
      await t.ownerQuery(`INSERT INTO baseline_value (participant_id, covariate_id, value_number, measured_on) VALUES ($1, $2, $3, $4)`, [id, covariateIds[key], v, on]);
    }
    await t.ownerQuery(`INSERT INTO baseline_value (participant_id, covariate_id, value_text, measured_on) VALUES ($1, $2, $3, $4)`, [id, covariateIds.sex, sex, on]);
    // The outcome is stored later through the API, as a coordinator would.
    const outcome = 120 + slopes[arm]! * walkBase - 0.6 * age + (arm === 0 ? 25 : 0) + (sex === 'male' ? 8 : 0) + 30 * gauss(r);
    participants.push({ id, code, site, arm, outcome });
  }
  const make = async (memberships: Parameters<typeof createUser>[1]) => {
    const u = await createUser(t, memberships);
    return { u, agent: await signIn(t, u.email) };
  };
  const [s1, s2] = study.siteIds as [string, string];
  const stat = await make({ memberships: [{ studyId: study.id, role: 'statistician' }] });
  return {
    studyId: study.id,
    siteIds: study.siteIds,
    armIds: study.armIds,
    covariateIds,
    participants,
    statistician: stat.agent,
    statisticianId: stat.u.id,
    coordinator: (await make({ memberships: [{ studyId: study.id, role: 'coordinator', siteIds: [s1] }] })).agent,
    otherCoordinator: (await make({ memberships: [{ studyId: study.id, role: 'coordinator', siteIds: [s2] }] })).agent,
    admin: (await make({ isAdmin: true })).agent,
    sponsor: (await make({ memberships: [{ studyId: study.id, role: 'sponsor' }] })).agent,
    auditor: (await make({ memberships: [{ studyId: study.id, role: 'auditor' }] })).agent,
  };
}

/** Outcome rows for the PUT body (measured a week ago, after enrollment). */
export const outcomeRows = (cast: Cast, filter: (p: Cast['participants'][number]) => boolean = () => true) =>
  cast.participants.filter(filter).map((p) => ({ participantCode: p.code, value: Math.round(p.outcome * 10) / 10, measuredOn: isoDaysAgo(7) }));

export const daysAgo = isoDaysAgo;
