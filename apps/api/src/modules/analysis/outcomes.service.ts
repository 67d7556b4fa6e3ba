import { analysisNote, type OutcomesOverview, type OutcomesPutBody, type OutcomesPutResponse } from '@counterpoise/contracts/analysis';
import { utcToday } from '@counterpoise/contracts/participants';
import type { AppContext } from '../../app-context.js';
import { inTransaction } from '../../db/transaction.js';
import { AppError } from '../../http/app-error.js';
import { appendAudit, type AuditActor, type AuditEntry } from '../audit/audit.service.js';
import type { StudyAccess } from '../policy/policy.js';
import { completeness } from './analysis-spec.service.js';
import { specVersions } from './analysis-data.js';

type Issue = { path: string[]; message: string };

/**
 * What outcome entry shows: the outcome the current specification names and its completeness,
 * over the reader's own sites when they are site staff. No arm, no model, no values.
 */
export async function outcomesOverview(ctx: AppContext, access: StudyAccess, studyId: string): Promise<OutcomesOverview> {
  const current = (await specVersions(ctx.ds, studyId)).at(-1) ?? null;
  if (!current) return { outcome: null, specVersion: null, specStatus: null, completeness: null, note: analysisNote };
  const { key, label, unit } = current.spec.outcome;
  return {
    outcome: { key, label, unit },
    specVersion: current.version,
    specStatus: current.status,
    completeness: await completeness(ctx.ds, studyId, key, access.siteIds),
    note: analysisNote,
  };
}

/**
 * Records outcome values in bulk by participant code. New values are entered; a different value
 * or date for one already recorded is a correction and needs a reason; equal rows change nothing.
 * Site staff reach only their own sites. Nothing here carries an arm, so blinded staff can use it.
 * With `mode: 'check'` every row is checked the same way and the counts say what a PUT would do,
 * but nothing is written and no reason is asked for (the caller asks for one when `corrected` > 0).
 */
export async function putOutcomes(
  ctx: AppContext,
  actor: AuditActor & { userId: string },
  access: StudyAccess,
  studyId: string,
  input: OutcomesPutBody,
  mode: 'write' | 'check' = 'write',
): Promise<OutcomesPutResponse> {
  const named: { n: number }[] = await ctx.ds.query(
    `SELECT count(*)::int AS n FROM analysis_spec WHERE study_id = $1 AND spec -> 'outcome' ->> 'key' = $2`,
    [studyId, input.outcomeKey],
  );
  if (!named[0]?.n) {
    throw new AppError('validation_failed', `No analysis specification of this study names the outcome '${input.outcomeKey}'`, {
      issues: [{ path: ['outcomeKey'], message: `Unknown outcome '${input.outcomeKey}'` }],
    });
  }
  const issues: Issue[] = [];
  const seen = new Map<string, number>();
  input.rows.forEach((r, i) => {
    if (seen.has(r.participantCode)) issues.push({ path: ['rows', String(i), 'participantCode'], message: `${r.participantCode} also appears in row ${seen.get(r.participantCode)! + 1}` });
    seen.set(r.participantCode, i);
  });
  if (issues.length) throw new AppError('validation_failed', 'Each participant may appear once per request', { issues });

  return inTransaction(ctx.ds, async (tx) => {
    const codes = input.rows.map((r) => r.participantCode);
    const people: { id: string; code: string; site_id: string; status: string; enrolled_on: string | null }[] = await tx.query(
      `SELECT id, code, site_id, status, to_char(enrolled_at AT TIME ZONE 'UTC', 'YYYY-MM-DD') AS enrolled_on
         FROM participant WHERE study_id = $1 AND code = ANY($2::text[]) FOR UPDATE`,
      [studyId, codes],
    );
    const byCode = new Map(people.map((p) => [p.code, p]));
    if (access.siteIds) {
      // Say which rows, so a file with a stray row of another site can be fixed.
      const foreign = input.rows.flatMap((r, i) => {
        const p = byCode.get(r.participantCode);
        return p && !access.siteIds!.includes(p.site_id)
          ? [{ path: ['rows', String(i), 'participantCode'], message: `${r.participantCode} is not a participant of your site` }]
          : [];
      });
      if (foreign.length) throw new AppError('forbidden', 'You can only record outcomes of participants of your own site', { issues: foreign });
    }
    const today = utcToday();
    input.rows.forEach((r, i) => {
      const p = byCode.get(r.participantCode);
      const at = (f: string) => ['rows', String(i), f];
      if (!p) issues.push({ path: at('participantCode'), message: `No participant ${r.participantCode} in this study` });
      else if (p.status !== 'enrolled' && p.status !== 'withdrawn') issues.push({ path: at('participantCode'), message: `${r.participantCode} was not enrolled` });
      else if (p.enrolled_on && r.measuredOn < p.enrolled_on) issues.push({ path: at('measuredOn'), message: `Measured before ${r.participantCode} was enrolled (${p.enrolled_on})` });
      if (r.measuredOn > today) issues.push({ path: at('measuredOn'), message: 'The measurement date is in the future' });
    });
    if (issues.length) throw new AppError('validation_failed', 'Some rows cannot be recorded', { issues });

    const ids = people.map((p) => p.id);
    const existing: { participant_id: string; value: number; measured_on: string }[] = await tx.query(
      `SELECT participant_id, value, to_char(measured_on, 'YYYY-MM-DD') AS measured_on
         FROM outcome_value WHERE outcome_key = $1 AND participant_id = ANY($2::uuid[]) FOR UPDATE`,
      [input.outcomeKey, ids],
    );
    const old = new Map(existing.map((e) => [e.participant_id, e]));
    const changes: Array<{ p: (typeof people)[number]; value: number; measuredOn: string; before: { value: number; measuredOn: string } | null }> = [];
    let unchanged = 0;
    for (const r of input.rows) {
      const p = byCode.get(r.participantCode)!;
      const o = old.get(p.id);
      if (o && o.value === r.value && o.measured_on === r.measuredOn) {
        unchanged++;
        continue;
      }
      changes.push({ p, value: r.value, measuredOn: r.measuredOn, before: o ? { value: o.value, measuredOn: o.measured_on } : null });
    }
    const corrected = changes.filter((c) => c.before).length;
    if (mode === 'check') return { outcomeKey: input.outcomeKey, created: changes.length - corrected, corrected, unchanged, note: analysisNote };
    if (corrected > 0 && !input.reason) {
      throw new AppError('validation_failed', `${corrected} row(s) change values already recorded: give a reason for the correction`, {
        issues: [{ path: ['reason'], message: 'A reason is required to correct recorded outcome values' }],
      });
    }
    if (changes.length) {
      await tx.query(
        `INSERT INTO outcome_value (participant_id, outcome_key, value, measured_on, entered_by)
         SELECT u.pid, $1, u.value, u.measured_on, $5
           FROM unnest($2::uuid[], $3::float8[], $4::date[]) AS u(pid, value, measured_on)
         ON CONFLICT (participant_id, outcome_key)
         DO UPDATE SET value = EXCLUDED.value, measured_on = EXCLUDED.measured_on, entered_by = EXCLUDED.entered_by, updated_at = now()`,
        [input.outcomeKey, changes.map((c) => c.p.id), changes.map((c) => c.value), changes.map((c) => c.measuredOn), actor.userId],
      );
      const entries: AuditEntry[] = changes.map((c) => ({
        action: c.before ? 'outcome.corrected' : 'outcome.recorded',
        entityType: 'outcome_value',
        entityId: `${c.p.id}:${input.outcomeKey}`,
        studyId,
        siteId: c.p.site_id,
        before: c.before ? { participantCode: c.p.code, outcomeKey: input.outcomeKey, ...c.before } : null,
        after: { participantCode: c.p.code, outcomeKey: input.outcomeKey, value: c.value, measuredOn: c.measuredOn },
        reason: c.before ? (input.reason ?? null) : null,
      }));
      await appendAudit(tx, actor, entries);
    }
    return { outcomeKey: input.outcomeKey, created: changes.length - corrected, corrected, unchanged, note: analysisNote };
  });
}
