import {
  buildBaselineSchema,
  evaluateEligibility,
  utcToday,
  type BaselineEntry,
} from '@counterpoise/contracts/participants';
import type { EntityManager } from 'typeorm';
import type { AppContext } from '../../app-context.js';
import { AppError } from '../../http/app-error.js';
import { PENDING_ROW_MAX, appendAudit, pendingAuditPayload, type AuditActor, type AuditEntry } from '../audit/audit.service.js';
import type { StudyDesign } from '../design/study-design.js';
import { allocate, insertAllocations, levelOf, randomCode, type AllocationResult } from './allocation.service.js';

export type Issue = { path: string[]; message: string };

/** One enrollment as submitted (API body, CSV row or demo seed), before validation. */
export type EnrollmentInput = {
  siteId: string;
  consent: { date: string; version: string };
  baseline: Record<string, unknown>;
  /** Defaults to today (UTC); imports may carry an earlier date. */
  enrollmentDate?: string;
  screeningAnswers?: Record<string, unknown>;
  exposureArmId?: string | null;
  /** A participant already created by an eligible screening. */
  existingParticipantId?: string;
  screeningId?: string;
  importKey?: string | null;
};

export type ValidEnrollment = Omit<EnrollmentInput, 'baseline' | 'enrollmentDate'> & {
  enrollmentDate: string;
  baseline: Record<string, BaselineEntry>;
  siteCode: string;
};

// Keyed by the loaded design object: loadDesign hands out a new one whenever the design changes.
const schemaCache = new WeakMap<StudyDesign, Map<string, ReturnType<typeof buildBaselineSchema>>>();

/** The generated baseline schema for one design and enrollment date (cached: imports validate thousands of rows). */
function baselineSchema(design: StudyDesign, enrollmentDate: string, today: string) {
  let byDate = schemaCache.get(design);
  if (!byDate) schemaCache.set(design, (byDate = new Map()));
  const key = `${enrollmentDate}|${today}`;
  let schema = byDate.get(key);
  if (!schema) {
    if (byDate.size > 2000) byDate.clear();
    schema = buildBaselineSchema(design.covariates, { enrollmentDate, today });
    byDate.set(key, schema);
  }
  return schema;
}

/**
 * Validates one enrollment against the study design: site, consent, dates, every baseline
 * value (the same generated schema the web form runs), the exposure group for cohorts, and
 * the eligibility criteria. Returns plain-language issues instead of throwing, so an import
 * can report every row.
 */
export function validateEnrollment(
  design: StudyDesign,
  input: EnrollmentInput,
  today = utcToday(),
): { ok: true; value: ValidEnrollment } | { ok: false; issues: Issue[] } {
  const issues: Issue[] = [];
  const site = design.sites.find((s) => s.id === input.siteId);
  if (!site) issues.push({ path: ['siteId'], message: 'This site does not belong to the study' });
  else if (site.status !== 'active') issues.push({ path: ['siteId'], message: `Site ${site.code} is ${site.status} and not enrolling` });
  const enrollmentDate = input.enrollmentDate ?? today;
  if (enrollmentDate > today) issues.push({ path: ['enrollmentDate'], message: 'The enrollment date is in the future' });
  if (input.consent.date > today) issues.push({ path: ['consent', 'date'], message: 'The consent date is in the future' });
  else if (input.consent.date > enrollmentDate) {
    issues.push({ path: ['consent', 'date'], message: 'Consent must be given on or before the enrollment date' });
  }
  if (design.kind === 'observational_cohort') {
    if (!input.exposureArmId) issues.push({ path: ['exposureArmId'], message: 'Record the exposure group' });
    else if (!design.arms.some((a) => a.id === input.exposureArmId)) {
      issues.push({ path: ['exposureArmId'], message: 'Not an exposure group of this study' });
    }
  } else if (input.exposureArmId) {
    issues.push({ path: ['exposureArmId'], message: 'Arms are allocated in a randomized trial, not chosen' });
  }
  if (!design.allocation) issues.push({ path: [], message: 'The study design is not complete yet' });
  const parsed = baselineSchema(design, enrollmentDate, today).safeParse(input.baseline);
  if (!parsed.success) {
    for (const i of parsed.error.issues) issues.push({ path: ['baseline', ...i.path.map(String)], message: i.message });
  }
  const baseline: Record<string, BaselineEntry> = {};
  if (parsed.success) {
    for (const [k, v] of Object.entries(parsed.data as Record<string, BaselineEntry | null | undefined>)) if (v) baseline[k] = v;
    const answers: Record<string, unknown> = { ...(input.screeningAnswers ?? {}) };
    for (const [k, v] of Object.entries(baseline)) answers[k] = v.value;
    const { failed } = evaluateEligibility(design.eligibility, answers);
    for (const f of failed) issues.push({ path: ['eligibility', f.id], message: `${f.label}: ${f.reason}` });
  }
  if (issues.length) return { ok: false, issues };
  return { ok: true, value: { ...input, enrollmentDate, baseline, siteCode: site!.code } };
}

export type EnrolledParticipant = {
  id: string;
  code: string;
  siteId: string;
  siteCode: string;
  enrolledAt: string;
  allocation: AllocationResult | null;
  exposureArmId: string | null;
};

type AuditMode = 'per_participant' | 'batch';

type ValueColumns = { ord: number[]; cov: string[]; num: (number | null)[]; txt: (string | null)[]; on: string[] };

/** Baseline values as column arrays; `ord` is the item's index in its chunk (1-based, as WITH ORDINALITY counts). */
function valueColumns(design: StudyDesign, items: ValidEnrollment[]): ValueColumns {
  const byKey = new Map(design.covariates.map((c) => [c.key, c]));
  const out: ValueColumns = { ord: [], cov: [], num: [], txt: [], on: [] };
  items.forEach((item, i) => {
    for (const [key, entry] of Object.entries(item.baseline)) {
      const def = byKey.get(key)!;
      out.ord.push(i + 1);
      out.cov.push(def.id);
      if (def.kind === 'categorical') {
        out.num.push(null);
        out.txt.push(String(entry.value));
      } else {
        out.num.push(def.kind === 'binary' ? (entry.value ? 1 : 0) : Number(entry.value));
        out.txt.push(null);
      }
      out.on.push(entry.measuredOn);
    }
  });
  return out;
}

/**
 * Inserts new participants with random codes (never derived from personal data) and their
 * baseline values in one statement per chunk; a participant whose code clashed is retried
 * with a new code, values included.
 */
async function insertParticipants(tx: EntityManager, design: StudyDesign, items: ValidEnrollment[], stamps: string[]): Promise<{ id: string; code: string }[]> {
  const out = new Array<{ id: string; code: string }>(items.length);
  let pending = items.map((_, i) => i);
  for (let attempt = 0; pending.length && attempt < 5; attempt++) {
    for (let c = 0; c < pending.length; c += CHUNK) {
      const chunk = pending.slice(c, c + CHUNK);
      const codes = chunk.map((i) => `${design.code}-${items[i]!.siteCode}-${randomCode(6)}`);
      const v = valueColumns(design, chunk.map((i) => items[i]!));
      const rows: { id: string; code: string }[] = await tx.query(
        `WITH input AS (
           SELECT * FROM unnest($2::uuid[], $3::text[], $4::timestamptz[], $5::date[], $6::text[], $7::uuid[], $8::text[])
             WITH ORDINALITY AS t(s, c, e, cd, cv, x, k, ord)
         ), p AS (
           INSERT INTO participant (study_id, site_id, code, status, screened_at, enrolled_at, consent_date, consent_version, exposure_arm_id, import_key)
           SELECT $1, s, c, 'enrolled', e, e, cd, cv, x, k FROM input
           ON CONFLICT (study_id, code) DO NOTHING RETURNING id, code
         ), fresh AS (
           -- Every value below belongs to a participant this statement inserts: the balance log's
           -- trigger then skips them (the participant's own change row covers them) and clears this.
           SELECT set_config('counterpoise.values_of_new_participants', 'on', true) AS flag
         ), b AS (
           INSERT INTO baseline_value (participant_id, covariate_id, value_number, value_text, measured_on)
           SELECT p.id, v.cov, v.num, v.txt, v.d
             FROM unnest($9::int[], $10::uuid[], $11::float8[], $12::text[], $13::date[]) AS v(ord, cov, num, txt, d)
             JOIN input ON input.ord = v.ord JOIN p ON p.code = input.c CROSS JOIN fresh
         )
         SELECT id, code FROM p`,
        [
          design.id,
          chunk.map((i) => items[i]!.siteId),
          codes,
          chunk.map((i) => stamps[i]),
          chunk.map((i) => items[i]!.consent.date),
          chunk.map((i) => items[i]!.consent.version),
          chunk.map((i) => items[i]!.exposureArmId ?? null),
          chunk.map((i) => items[i]!.importKey ?? null),
          v.ord,
          v.cov,
          v.num,
          v.txt,
          v.on,
        ],
      );
      const byCode = new Map(rows.map((r) => [r.code, r.id]));
      chunk.forEach((i, j) => {
        const id = byCode.get(codes[j]!);
        if (id) out[i] = { id, code: codes[j]! };
      });
    }
    pending = pending.filter((i) => !out[i]);
  }
  if (pending.length) throw new AppError('internal', 'Could not generate unique participant codes');
  return out;
}

const CHUNK = 5000;

// Live enrollments are stamped now; imported ones with their enrollment date at noon UTC.
function enrolledAt(item: ValidEnrollment): string {
  return item.enrollmentDate === utcToday() ? new Date().toISOString() : `${item.enrollmentDate}T12:00:00Z`;
}

async function insertBaseline(tx: EntityManager, design: StudyDesign, participantIds: string[], items: ValidEnrollment[]) {
  if (!items.length) return;
  const v = valueColumns(design, items);
  await tx.query(
    `INSERT INTO baseline_value (participant_id, covariate_id, value_number, value_text, measured_on)
     SELECT ($1::uuid[])[ord], cov, num, txt, d FROM unnest($2::int[], $3::uuid[], $4::float8[], $5::text[], $6::date[]) AS v(ord, cov, num, txt, d)`,
    [participantIds, v.ord, v.cov, v.num, v.txt, v.on],
  );
}

/** Factor levels of a participant for allocation (stratification and minimization factors). */
function factorLevels(design: StudyDesign, item: ValidEnrollment): Record<string, string> {
  const levels: Record<string, string> = {};
  for (const c of design.covariates) {
    const entry = item.baseline[c.key];
    if (entry && c.kind !== 'continuous') levels[c.key] = levelOf(c.kind, entry.value);
  }
  return levels;
}

/**
 * Enrolls validated participants inside the caller's transaction: participant rows, baseline
 * values, the allocation (randomized trials) or the recorded exposure (cohorts), a balance
 * recompute job, and the audit entries, last. Items are allocated in the order given.
 */
export async function enrollValidated(
  tx: EntityManager,
  ctx: Pick<AppContext, 'jobs'>,
  design: StudyDesign,
  actor: AuditActor,
  items: ValidEnrollment[],
  opts: { auditMode?: AuditMode; reason?: string; extraAudit?: AuditEntry[]; skipJob?: boolean } = {},
): Promise<EnrolledParticipant[]> {
  if (items.length === 0) return [];
  const stamps = items.map(enrolledAt);
  const fresh = items.map((it, i) => ({ it, i })).filter((x) => !x.it.existingParticipantId);
  const idCode = new Array<{ id: string; code: string }>(items.length);
  if (fresh.length) {
    const made = await insertParticipants(tx, design, fresh.map((x) => x.it), fresh.map((x) => stamps[x.i]!));
    made.forEach((v, j) => {
      idCode[fresh[j]!.i] = v;
    });
  }
  const existing: number[] = [];
  for (const [i, it] of items.entries()) {
    if (!it.existingParticipantId) continue;
    // TypeORM returns [rows, count] for UPDATE ... RETURNING.
    const [rows]: [{ id: string; code: string }[], number] = await tx.query(
      `UPDATE participant SET status = 'enrolled', enrolled_at = $3, consent_date = $4, consent_version = $5, exposure_arm_id = $6,
              updated_at = now()
        WHERE id = $1 AND study_id = $2 AND status = 'screened' RETURNING id, code`,
      [it.existingParticipantId, design.id, stamps[i], it.consent.date, it.consent.version, it.exposureArmId ?? null],
    );
    if (!rows[0]) throw new AppError('conflict', 'This screened participant is already enrolled or not eligible');
    idCode[i] = rows[0];
    existing.push(i);
  }
  const ids = idCode.map((x) => x.id);
  await insertBaseline(tx, design, existing.map((i) => ids[i]!), existing.map((i) => items[i]!));

  // The job first: from the stratum reservation on, every round trip holds the stratum's lock.
  if (!opts.skipJob) {
    await ctx.jobs.send(tx, 'balance.recompute', { studyId: design.id, reason: opts.auditMode === 'batch' ? 'participants imported' : 'participant enrolled' }, { singletonKey: design.id });
  }
  let allocations: AllocationResult[] = [];
  if (design.kind === 'randomized_trial') {
    allocations = await allocate(
      tx,
      design,
      items.map((it, i) => ({ participantId: ids[i]!, siteCode: it.siteCode, levels: factorLevels(design, it) })),
    );
  }

  const armCode = new Map(design.arms.map((a) => [a.id, a.code]));
  const entries: AuditEntry[] = [];
  const revealing: { code: string; arm: string; kitCode?: string; stratumKey?: string; position?: number }[] = [];
  items.forEach((it, i) => {
    const { code, id } = idCode[i]!;
    const alloc = allocations[i];
    entries.push({
      action: 'participant.enrolled',
      entityType: 'participant',
      entityId: id,
      studyId: design.id,
      siteId: it.siteId,
      after: {
        code,
        site: it.siteCode,
        enrollmentDate: it.enrollmentDate,
        consent: it.consent,
        baseline: it.baseline,
        ...(alloc ? { kitCode: alloc.kitCode } : {}),
        ...(it.importKey ? { importKey: it.importKey } : {}),
        designVersion: design.designVersion,
      },
      reason: opts.reason ?? null,
    });
    const arm = alloc ? alloc.armCode : it.exposureArmId ? armCode.get(it.exposureArmId)! : null;
    if (!arm) return;
    const reveal = alloc
      ? { code, arm, kitCode: alloc.kitCode, stratumKey: alloc.stratumKey, position: alloc.position, algorithmVersion: alloc.algorithmVersion }
      : { code, arm };
    if (opts.auditMode === 'batch') revealing.push(reveal);
    else {
      entries.push({
        action: alloc ? 'allocation.assigned' : 'exposure.recorded',
        entityType: 'participant',
        entityId: id,
        studyId: design.id,
        siteId: it.siteId,
        after: reveal,
        revealsAllocation: true,
      });
    }
  });
  if (revealing.length) {
    entries.push({
      action: design.kind === 'randomized_trial' ? 'allocation.assigned_batch' : 'exposure.recorded_batch',
      entityType: 'study',
      entityId: design.id,
      studyId: design.id,
      after: { count: revealing.length, allocations: revealing },
      revealsAllocation: true,
    });
  }
  const allEntries = [...entries, ...(opts.extraAudit ?? [])];
  if (allocations.length && allocations.length <= 5000 && allEntries.length <= PENDING_ROW_MAX) {
    // Live enrollments: allocations and audit entries in one statement, then COMMIT.
    await insertAllocations(tx, design, allocations, pendingAuditPayload(actor, allEntries, tx));
  } else {
    if (allocations.length) await insertAllocations(tx, design, allocations);
    await appendAudit(tx, actor, allEntries);
  }

  return items.map((it, i) => ({
    id: idCode[i]!.id,
    code: idCode[i]!.code,
    siteId: it.siteId,
    siteCode: it.siteCode,
    enrolledAt: stamps[i]!,
    allocation: allocations[i] ?? null,
    exposureArmId: it.exposureArmId ?? null,
  }));
}
