import { buildBaselineSchema, utcToday, type BaselineEntry, type ParticipantPatchBody } from '@counterpoise/contracts/participants';
import type { EntityManager } from 'typeorm';
import type { AppContext } from '../../app-context.js';
import { inTransaction } from '../../db/transaction.js';
import { AppError, forbidden, notFound } from '../../http/app-error.js';
import { appendAudit, type AuditActor } from '../audit/audit.service.js';
import { loadDesign, type StudyDesign } from '../design/study-design.js';
import type { StudyAccess } from '../policy/policy.js';

type LockedParticipant = { id: string; code: string; site_id: string; status: string; enrolled_on: string | null; consent_date: string | null; consent_version: string | null };

/** Locks the participant row; site staff may only touch their own sites' participants. */
export async function lockParticipant(tx: EntityManager, access: StudyAccess, studyId: string, participantId: string): Promise<LockedParticipant> {
  const rows: LockedParticipant[] = await tx.query(
    `SELECT id, code, site_id, status, to_char(enrolled_at AT TIME ZONE 'UTC', 'YYYY-MM-DD') AS enrolled_on,
            to_char(consent_date, 'YYYY-MM-DD') AS consent_date, consent_version
       FROM participant WHERE id = $1 AND study_id = $2 FOR UPDATE`,
    [participantId, studyId],
  );
  const p = rows[0];
  if (!p) throw notFound('Participant');
  if (access.siteIds && !access.siteIds.includes(p.site_id)) throw forbidden('You can only work with participants of your own site');
  return p;
}

async function currentValues(tx: EntityManager, design: StudyDesign, participantId: string, keys: string[]) {
  const ids = design.covariates.filter((c) => keys.includes(c.key)).map((c) => c.id);
  const rows: { key: string; kind: string; value_number: number | null; value_text: string | null; measured_on: string }[] = await tx.query(
    `SELECT c.key, c.kind, bv.value_number, bv.value_text, to_char(bv.measured_on, 'YYYY-MM-DD') AS measured_on
       FROM baseline_value bv JOIN covariate_definition c ON c.id = bv.covariate_id
      WHERE bv.participant_id = $1 AND bv.covariate_id = ANY($2::uuid[])`,
    [participantId, ids],
  );
  const out: Record<string, BaselineEntry | null> = Object.fromEntries(keys.map((k) => [k, null]));
  for (const r of rows) {
    out[r.key] = { value: r.kind === 'categorical' ? r.value_text! : r.kind === 'binary' ? r.value_number === 1 : r.value_number!, measuredOn: r.measured_on };
  }
  return out;
}

/** Corrections (reason, old and new values audited) and withdrawal (stops data entry, keeps the data). */
export async function changeParticipant(
  ctx: AppContext,
  actor: AuditActor,
  access: StudyAccess,
  studyId: string,
  participantId: string,
  input: ParticipantPatchBody,
): Promise<void> {
  await inTransaction(ctx.ds, async (tx) => {
    const design = await loadDesign(tx, studyId, { lock: true });
    const p = await lockParticipant(tx, access, studyId, participantId);
    if (p.status === 'withdrawn') throw new AppError('conflict', 'This participant has withdrawn: no further data can be entered');
    if (input.action === 'withdraw') {
      if (p.status !== 'enrolled') throw new AppError('conflict', 'Only an enrolled participant can withdraw');
      await tx.query(`UPDATE participant SET status = 'withdrawn', withdrawn_at = now(), withdrawal_reason = $2, updated_at = now() WHERE id = $1`, [
        p.id,
        input.reason,
      ]);
      await ctx.jobs.send(tx, 'balance.recompute', { studyId, reason: 'participant withdrawn' }, { singletonKey: studyId });
      await appendAudit(tx, actor, [
        { action: 'participant.withdrawn', entityType: 'participant', entityId: p.id, studyId, siteId: p.site_id, before: { status: p.status }, after: { status: 'withdrawn', code: p.code }, reason: input.reason },
      ]);
      return;
    }
    if (p.status !== 'enrolled' || !p.enrolled_on) throw new AppError('conflict', 'Baseline values can be corrected only for enrolled participants');
    const baselineIn = input.baseline ?? {};
    if (!Object.keys(baselineIn).length && !input.consent) {
      throw new AppError('validation_failed', 'Nothing to correct', { issues: [{ path: ['baseline'], message: 'Send at least one value to correct' }] });
    }
    const schema = buildBaselineSchema(design.covariates, { enrollmentDate: p.enrolled_on, today: utcToday(), partial: true });
    const parsed = schema.safeParse(baselineIn);
    const issues = parsed.success ? [] : parsed.error.issues.map((i) => ({ path: ['baseline', ...i.path.map(String)], message: i.message }));
    if (input.consent && input.consent.date > p.enrolled_on) {
      issues.push({ path: ['consent', 'date'], message: 'Consent must be given on or before the enrollment date' });
    }
    if (issues.length) throw new AppError('validation_failed', 'Some corrections are not valid', { issues });
    const next = parsed.data as Record<string, BaselineEntry | null | undefined>;
    const keys = Object.keys(next).filter((k) => next[k]);
    const before: Record<string, unknown> = await currentValues(tx, design, p.id, keys);
    const after: Record<string, unknown> = {};
    for (const key of keys) {
      const def = design.covariates.find((c) => c.key === key)!;
      const e = next[key]!;
      await tx.query(
        `INSERT INTO baseline_value (participant_id, covariate_id, value_number, value_text, measured_on, updated_at) VALUES ($1, $2, $3, $4, $5, now())
         ON CONFLICT (participant_id, covariate_id) DO UPDATE SET value_number = EXCLUDED.value_number, value_text = EXCLUDED.value_text,
           measured_on = EXCLUDED.measured_on, updated_at = now()`,
        [p.id, def.id, def.kind === 'categorical' ? null : def.kind === 'binary' ? (e.value ? 1 : 0) : e.value, def.kind === 'categorical' ? e.value : null, e.measuredOn],
      );
      after[key] = e;
    }
    if (input.consent) {
      before.consent = { date: p.consent_date, version: p.consent_version };
      after.consent = input.consent;
      await tx.query(`UPDATE participant SET consent_date = $2, consent_version = $3, updated_at = now() WHERE id = $1`, [p.id, input.consent.date, input.consent.version]);
    } else {
      await tx.query(`UPDATE participant SET updated_at = now() WHERE id = $1`, [p.id]);
    }
    // The allocation stands (intention to treat); the entry records that a stratification value moved.
    const stratumChanged = keys.filter((k) => design.covariates.find((c) => c.key === k)?.isStratification);
    await ctx.jobs.send(tx, 'balance.recompute', { studyId, reason: 'baseline corrected' }, { singletonKey: studyId });
    await appendAudit(tx, actor, [
      {
        action: 'participant.corrected',
        entityType: 'participant',
        entityId: p.id,
        studyId,
        siteId: p.site_id,
        before,
        after: { ...after, ...(stratumChanged.length ? { stratificationFactorsChanged: stratumChanged } : {}) },
        reason: input.reason,
      },
    ]);
  });
}

/** Emergency unblinding of one participant: audited (the arm only in an allocation-revealing entry), statisticians e-mailed. */
export async function unblind(
  ctx: AppContext,
  actor: AuditActor,
  access: StudyAccess,
  studyId: string,
  participantId: string,
  reason: string,
) {
  const result = await inTransaction(ctx.ds, async (tx) => {
    const design = await loadDesign(tx, studyId, { lock: true });
    if (design.kind !== 'randomized_trial') throw new AppError('conflict', 'Only randomized trials allocate arms');
    if (design.blinding !== 'blinded') throw new AppError('conflict', 'This study is open-label: there is nothing to unblind');
    const p = await lockParticipant(tx, access, studyId, participantId);
    const rows: { arm_id: string; kit_code: string }[] = await tx.query(`SELECT arm_id, kit_code FROM allocation WHERE participant_id = $1`, [p.id]);
    const alloc = rows[0];
    if (!alloc) throw new AppError('conflict', 'This participant has no allocation');
    const arm = design.arms.find((a) => a.id === alloc.arm_id)!;
    const at: { now: Date }[] = await tx.query(`SELECT now() AS now`);
    await appendAudit(tx, actor, [
      { action: 'participant.unblinded', entityType: 'participant', entityId: p.id, studyId, siteId: p.site_id, after: { code: p.code, kitCode: alloc.kit_code }, reason },
      { action: 'allocation.unblinded', entityType: 'participant', entityId: p.id, studyId, siteId: p.site_id, after: { code: p.code, kitCode: alloc.kit_code, arm: arm.code }, reason, revealsAllocation: true },
    ]);
    return { code: p.code, arm, unblindedAt: new Date(at[0]!.now).toISOString(), design };
  });
  const recipients: { email: string }[] = await ctx.ds.query(
    `SELECT u.email FROM membership m JOIN app_user u ON u.id = m.user_id WHERE m.study_id = $1 AND m.role = 'statistician' AND u.status = 'active'`,
    [studyId],
  );
  let notified = 0;
  if (recipients.length) {
    // The arm stays out of the e-mail: the recipients can read it in the audit trail.
    const sent = await ctx.mailer.send({
      to: recipients.map((r) => r.email),
      subject: `[${result.design.code}] Emergency unblinding of ${result.code}`,
      text: [
        `Participant ${result.code} of study ${result.design.code} was unblinded at ${result.unblindedAt} (UTC).`,
        `By: ${actor.email ?? 'unknown'} (${actor.role ?? ''})`,
        `Reason: ${reason}`,
        '',
        'The allocation is recorded in the audit trail (visible to unblinded roles).',
      ].join('\n'),
    });
    if (sent) notified = recipients.length;
  }
  return { participantId, arm: { id: result.arm.id, code: result.arm.code, name: result.arm.name }, unblindedAt: result.unblindedAt, notified };
}
