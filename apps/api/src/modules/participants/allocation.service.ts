import { randomBytes } from 'node:crypto';
import { createRng, minimizationAssign, permutedBlockSequence, type PermutedBlockList } from '@counterpoise/stats';
import type { EntityManager } from 'typeorm';
import { AppError } from '../../http/app-error.js';
import type { StudyDesign } from '../design/study-design.js';

/** One participant to allocate: their site and their level of every stratification / minimization factor. */
export type AllocationRequest = { participantId: string; siteCode: string; levels: Record<string, string> };
export type AllocationResult = {
  participantId: string;
  armId: string;
  armCode: string;
  stratumKey: string;
  position: number;
  kitCode: string;
  algorithm: string;
  algorithmVersion: string;
  detail: Record<string, unknown>;
};

export const MINIMIZATION_STRATUM = '__minimization__';
const KIT_ALPHABET = '0123456789ABCDEFGHJKMNPQRSTVWXYZ'; // Crockford base32: no I, L, O, U

export function randomCode(length: number): string {
  const bytes = randomBytes(length);
  let out = '';
  for (let i = 0; i < length; i++) out += KIT_ALPHABET[bytes[i]! & 31];
  return out;
}

/** Stratum of a participant under permuted blocks: site (if stratified by site) then each stratification factor, in design order. */
export function stratumKey(design: StudyDesign, siteCode: string, levels: Record<string, string>): string {
  const a = design.allocation;
  const parts: string[] = [];
  if (a?.method === 'permuted_blocks' && a.stratifyBySite) parts.push(`site=${siteCode}`);
  for (const c of design.covariates) if (c.isStratification) parts.push(`${c.key}=${levels[c.key] ?? ''}`);
  return parts.length ? parts.join('|') : 'all';
}

/** The factor level a stored or submitted value stands for (binary as yes/no), shared with the SQL counts below. */
export function levelOf(kind: string, value: unknown): string {
  if (kind === 'binary') return value === true || value === 1 ? 'yes' : 'no';
  return String(value);
}

export const stratumSeed = (seed: string, stratum: string) => `${seed}/${stratum}`;
export const minimizationSeed = (seed: string, position: number) => `${seed}/minimization/${position}`;

// Sequences are pure functions of (seed, stratum, arms, ratio, block sizes): cache them and grow on demand.
const sequences = new Map<string, PermutedBlockList>();
export function blockSequence(design: StudyDesign, stratum: string, minLength: number): PermutedBlockList {
  const a = design.allocation;
  if (a?.method !== 'permuted_blocks' || !a.seed) throw new AppError('internal', 'No permuted-block scheme');
  const arms = design.arms.map((x) => x.code);
  const ratio = design.arms.map((x) => x.ratio);
  const key = JSON.stringify([a.seed, stratum, arms, ratio, a.blockSizes]);
  let list = sequences.get(key);
  if (!list || list.assignments.length < minLength) {
    list = permutedBlockSequence({ arms, ratio, blockSizes: a.blockSizes, seed: stratumSeed(a.seed, stratum), length: Math.max(256, minLength * 2) });
    if (sequences.size > 5000) sequences.clear();
    sequences.set(key, list);
  }
  return list;
}

/**
 * Reserves `n` consecutive slots in a stratum. The upsert locks the stratum_counter row until
 * the transaction ends, so concurrent enrollments in one stratum queue up and never share a
 * slot; a rolled-back enrollment gives its slot back.
 */
async function reserve(tx: EntityManager, studyId: string, stratum: string, n: number): Promise<number> {
  const rows: { next_position: number }[] = await tx.query(
    `INSERT INTO stratum_counter (study_id, stratum_key, next_position) VALUES ($1, $2, $3)
     ON CONFLICT (study_id, stratum_key) DO UPDATE SET next_position = stratum_counter.next_position + EXCLUDED.next_position
     RETURNING next_position`,
    [studyId, stratum, n],
  );
  return rows[0]!.next_position - n;
}

type Counts = Record<string, Record<string, Record<string, number>>>;

/** Current counts per factor level and arm, read under the study's minimization lock. */
async function minimizationCounts(tx: EntityManager, design: StudyDesign, factors: string[]): Promise<Counts> {
  const counts: Counts = {};
  for (const f of factors) counts[f] = {};
  const armCode = new Map(design.arms.map((a) => [a.id, a.code]));
  const add = (f: string, level: string, armId: string, n: number) => {
    const byLevel = (counts[f]![level] ??= {});
    const code = armCode.get(armId)!;
    byLevel[code] = (byLevel[code] ?? 0) + n;
  };
  if (factors.includes('site')) {
    const rows: { site: string; arm_id: string; n: number }[] = await tx.query(
      `SELECT s.code AS site, a.arm_id, count(*)::int AS n FROM allocation a JOIN participant p ON p.id = a.participant_id
         JOIN site s ON s.id = p.site_id WHERE a.study_id = $1 GROUP BY s.code, a.arm_id`,
      [design.id],
    );
    for (const r of rows) add('site', r.site, r.arm_id, r.n);
  }
  const covs = design.covariates.filter((c) => factors.includes(c.key));
  if (covs.length) {
    const rows: { key: string; level: string; arm_id: string; n: number }[] = await tx.query(
      `SELECT c.key, CASE WHEN c.kind = 'binary' THEN (CASE WHEN bv.value_number = 1 THEN 'yes' ELSE 'no' END) ELSE bv.value_text END AS level,
              a.arm_id, count(*)::int AS n
         FROM allocation a JOIN baseline_value bv ON bv.participant_id = a.participant_id
         JOIN covariate_definition c ON c.id = bv.covariate_id
        WHERE a.study_id = $1 AND c.id = ANY($2::uuid[]) GROUP BY 1, 2, 3`,
      [design.id, covs.map((c) => c.id)],
    );
    for (const r of rows) add(r.key, r.level, r.arm_id, r.n);
  }
  return counts;
}

/**
 * Allocates participants in the given order inside the caller's transaction (the enrollment's
 * own), so an allocation exists exactly when its enrollment commits.
 */
export async function allocate(tx: EntityManager, design: StudyDesign, requests: AllocationRequest[]): Promise<AllocationResult[]> {
  const a = design.allocation;
  if (!a || a.method === 'exposure_recorded' || !a.seed) throw new AppError('precondition_failed', 'The study has no allocation scheme yet');
  const armByCode = new Map(design.arms.map((x) => [x.code, x]));
  const results: AllocationResult[] = [];
  if (a.method === 'permuted_blocks') {
    const byStratum = new Map<string, AllocationRequest[]>();
    for (const r of requests) {
      const k = stratumKey(design, r.siteCode, r.levels);
      byStratum.set(k, [...(byStratum.get(k) ?? []), r]);
    }
    const start = new Map<string, number>();
    // Lock strata in a fixed order so two multi-stratum batches cannot deadlock.
    for (const k of [...byStratum.keys()].sort()) start.set(k, await reserve(tx, design.id, k, byStratum.get(k)!.length));
    const next = new Map(start);
    for (const r of requests) {
      const k = stratumKey(design, r.siteCode, r.levels);
      const position = next.get(k)!;
      next.set(k, position + 1);
      const slot = blockSequence(design, k, position + 1).assignments[position]!;
      const arm = armByCode.get(slot.arm)!;
      results.push({
        participantId: r.participantId,
        armId: arm.id,
        armCode: arm.code,
        stratumKey: k,
        position,
        kitCode: `K-${randomCode(8)}`,
        algorithm: a.algorithm ?? 'permuted-block',
        algorithmVersion: a.algorithmVersion ?? '',
        detail: { block: slot.block, blockSize: slot.blockSize, positionInBlock: slot.positionInBlock, rngVersion: a.rngVersion },
      });
    }
    return results;
  }
  // Minimization: every allocation depends on all earlier ones, so one counter row serialises the study.
  let position = await reserve(tx, design.id, MINIMIZATION_STRATUM, requests.length);
  const counts = await minimizationCounts(tx, design, a.factors);
  const weights = Object.fromEntries(a.factors.map((f, i) => [f, a.weights[i] ?? 1]));
  for (const r of requests) {
    const levels = Object.fromEntries(a.factors.map((f) => [f, f === 'site' ? r.siteCode : r.levels[f] ?? '']));
    const decision = minimizationAssign({
      arms: design.arms.map((x) => x.code),
      ratio: design.arms.map((x) => x.ratio),
      factors: a.factors,
      levels,
      counts,
      weights,
      probability: a.probability,
      imbalance: a.imbalance,
      random: createRng(minimizationSeed(a.seed, position)),
    });
    for (const f of a.factors) {
      const byLevel = (counts[f]![levels[f]!] ??= {});
      byLevel[decision.assigned] = (byLevel[decision.assigned] ?? 0) + 1;
    }
    const arm = armByCode.get(decision.assigned)!;
    results.push({
      participantId: r.participantId,
      armId: arm.id,
      armCode: arm.code,
      stratumKey: MINIMIZATION_STRATUM,
      position,
      kitCode: `K-${randomCode(8)}`,
      algorithm: a.algorithm ?? 'minimization',
      algorithmVersion: a.algorithmVersion ?? '',
      detail: {
        levels,
        preferred: decision.preferred,
        tiedArms: decision.tiedArms,
        scores: decision.scores,
        draws: decision.draws,
        rngVersion: a.rngVersion,
      },
    });
    position += 1;
  }
  return results;
}

/**
 * Writes the allocations; `auditPayload` (from pendingAuditPayload) is written by the same
 * statement, so the stratum lock taken by the reservation is held one round trip less.
 */
export async function insertAllocations(tx: EntityManager, design: StudyDesign, rows: AllocationResult[], auditPayload?: string): Promise<void> {
  if (auditPayload !== undefined && rows.length > 5000) throw new AppError('internal', 'An audit payload goes with one chunk of allocations');
  for (let i = 0; i < rows.length; i += 5000) {
    const chunk = rows.slice(i, i + 5000);
    const insert = `INSERT INTO allocation (participant_id, study_id, arm_id, stratum_key, position, kit_code, algorithm, algorithm_version, design_version, detail)
       SELECT p, $1, a, s, pos, k, alg, ver, $2, d FROM unnest($3::uuid[], $4::uuid[], $5::text[], $6::int[], $7::text[], $8::text[], $9::text[], $10::jsonb[])
         AS t(p, a, s, pos, k, alg, ver, d)`;
    const params: unknown[] = [
      design.id,
      design.designVersion,
      chunk.map((r) => r.participantId),
      chunk.map((r) => r.armId),
      chunk.map((r) => r.stratumKey),
      chunk.map((r) => r.position),
      chunk.map((r) => r.kitCode),
      chunk.map((r) => r.algorithm),
      chunk.map((r) => r.algorithmVersion),
      chunk.map((r) => JSON.stringify(r.detail)),
    ];
    if (auditPayload === undefined) await tx.query(insert, params);
    // A data-modifying WITH runs whether or not the outer statement reads it.
    else await tx.query(`WITH written AS (${insert}) INSERT INTO audit_pending (entries) VALUES ($11::jsonb)`, [...params, auditPayload]);
  }
}
