import type { AnalysisSpec, Signature, SpecDto } from '@counterpoise/contracts/analysis';
import type { EntityManager } from 'typeorm';
import type { StudyDesign } from '../design/study-design.js';

type Queryable = Pick<EntityManager, 'query'>;

/** A factor used at randomization: a covariate, or the site (stratified blocks, or minimization on site). */
export type StrataFactor = { key: string; label: string; isSite: boolean };

export function stratificationFactors(design: StudyDesign): StrataFactor[] {
  if (design.kind !== 'randomized_trial') return [];
  const out: StrataFactor[] = [];
  const add = (key: string) => {
    if (out.some((f) => f.key === key)) return;
    if (key === 'site') out.push({ key: 'site', label: 'Site', isSite: true });
    else {
      const c = design.covariates.find((x) => x.key === key);
      if (c) out.push({ key, label: c.label, isSite: false });
    }
  };
  const a = design.allocation;
  if (a?.method === 'permuted_blocks' && a.stratifyBySite) add('site');
  if (a?.method === 'minimization') a.factors.forEach(add);
  design.covariates.filter((c) => c.isStratification).forEach((c) => add(c.key));
  return out;
}

/** Participants counted in the analysis population: intention to treat, enrolled and withdrawn. */
export const ITT_STATUSES = `('enrolled', 'withdrawn')`;

/**
 * Per covariate: recorded values and those measured after randomization (trial: the allocation
 * time; cohort: enrollment), compared as UTC dates so a same-day baseline counts as baseline.
 */
export async function covariateTiming(q: Queryable, studyId: string): Promise<Map<string, { recorded: number; after: number }>> {
  const rows: { key: string; recorded: number; after: number }[] = await q.query(
    `SELECT c.key, count(*)::int AS recorded,
            count(*) FILTER (WHERE bv.measured_on > (COALESCE(a.allocated_at, p.enrolled_at) AT TIME ZONE 'UTC')::date)::int AS after
       FROM covariate_definition c
       JOIN baseline_value bv ON bv.covariate_id = c.id
       JOIN participant p ON p.id = bv.participant_id AND p.status IN ${ITT_STATUSES}
       LEFT JOIN allocation a ON a.participant_id = p.id
      WHERE c.study_id = $1
      GROUP BY c.key`,
    [studyId],
  );
  return new Map(rows.map((r) => [r.key, { recorded: r.recorded, after: r.after }]));
}

export async function ittCount(q: Queryable, studyId: string): Promise<number> {
  const [r]: { n: number }[] = await q.query(`SELECT count(*)::int AS n FROM participant WHERE study_id = $1 AND status IN ${ITT_STATUSES}`, [studyId]);
  return r?.n ?? 0;
}

type SpecRow = {
  id: string;
  version: number;
  status: 'draft' | 'locked';
  spec: AnalysisSpec;
  created_at: Date;
  updated_at: Date;
  locked_at: Date | null;
  signer_name: string | null;
  signer_email: string | null;
  signature_meaning: string | null;
  signed_content_sha256: string | null;
};

const specSelect = `SELECT s.id, s.version, s.status, s.spec, s.created_at, s.updated_at, s.locked_at, s.signer_name,
                           u.email AS signer_email, s.signature_meaning, s.signed_content_sha256
                      FROM analysis_spec s LEFT JOIN app_user u ON u.id = s.locked_by`;

function signatureOf(r: SpecRow): Signature | null {
  if (r.status !== 'locked' || !r.locked_at) return null;
  return {
    signerName: r.signer_name ?? '',
    signerEmail: r.signer_email ?? '',
    signedAt: r.locked_at.toISOString(),
    meaning: r.signature_meaning ?? '',
    contentSha256: r.signed_content_sha256 ?? '',
  };
}

export function specDto(r: SpecRow): SpecDto {
  return {
    id: r.id,
    version: r.version,
    status: r.status,
    spec: r.spec,
    createdAt: r.created_at.toISOString(),
    updatedAt: r.updated_at.toISOString(),
    signature: signatureOf(r),
  };
}

/** Every version of the study's specification, oldest first. */
export async function specVersions(q: Queryable, studyId: string, opts: { lock?: boolean } = {}): Promise<SpecDto[]> {
  const rows: SpecRow[] = await q.query(
    `${specSelect} WHERE s.study_id = $1 ORDER BY s.version${opts.lock ? ' FOR UPDATE OF s' : ''}`,
    [studyId],
  );
  return rows.map(specDto);
}

/** The first locked version is the pre-specified analysis; any later version is a change after lock. */
export function firstLocked(versions: SpecDto[]): SpecDto | null {
  return versions.find((v) => v.status === 'locked') ?? null;
}

/** Exploratory unless the run uses exactly the first locked version (caution 3). */
export function isExploratory(versions: SpecDto[], used: SpecDto): boolean {
  const first = firstLocked(versions);
  return !first || first.version !== used.version;
}

export type RawRow = {
  participantId: string;
  code: string;
  siteCode: string;
  armId: string | null;
  outcome: number | null;
  values: Map<string, { n: number | null; t: string | null }>;
};

/** The analysis population with its outcome and the given covariates' raw values, read from the database. */
export async function loadAnalysisRows(q: Queryable, studyId: string, outcomeKey: string, covariateKeys: string[]): Promise<RawRow[]> {
  const people: { id: string; code: string; site_code: string; arm_id: string | null; outcome: number | null }[] = await q.query(
    `SELECT p.id, p.code, s.code AS site_code, COALESCE(a.arm_id, p.exposure_arm_id) AS arm_id, o.value AS outcome
       FROM participant p
       JOIN site s ON s.id = p.site_id
       LEFT JOIN allocation a ON a.participant_id = p.id
       LEFT JOIN outcome_value o ON o.participant_id = p.id AND o.outcome_key = $2
      WHERE p.study_id = $1 AND p.status IN ${ITT_STATUSES}
      ORDER BY p.code`,
    [studyId, outcomeKey],
  );
  const byId = new Map<string, RawRow>();
  for (const p of people) {
    byId.set(p.id, { participantId: p.id, code: p.code, siteCode: p.site_code, armId: p.arm_id, outcome: p.outcome, values: new Map() });
  }
  if (covariateKeys.length) {
    const vals: { participant_id: string; key: string; n: number | null; t: string | null }[] = await q.query(
      `SELECT bv.participant_id, c.key, bv.value_number AS n, bv.value_text AS t
         FROM baseline_value bv JOIN covariate_definition c ON c.id = bv.covariate_id
        WHERE c.study_id = $1 AND c.key = ANY($2::text[])`,
      [studyId, covariateKeys],
    );
    for (const v of vals) byId.get(v.participant_id)?.values.set(v.key, { n: v.n, t: v.t });
  }
  return [...byId.values()];
}
