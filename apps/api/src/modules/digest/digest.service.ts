import type { BalancePooledView } from '@counterpoise/contracts/balance';
import type { EntityManager } from 'typeorm';
import type { AppContext } from '../../app-context.js';
import { inTransaction, queryRows } from '../../db/transaction.js';
import { appendAudit, type AuditActor } from '../audit/audit.service.js';
import { latestHead, pooledText } from '../balance/balance.service.js';

type Queryable = Pick<EntityManager, 'query'>;
const SYSTEM: AuditActor = { userId: null, email: 'digest@counterpoise.local', role: 'system', requestId: null };
const DAY = 86_400_000;

/** The week a digest covers: the seven UTC days before the Monday at or before `now`. */
export function digestPeriod(now: Date): { start: string; end: string } {
  const today = Date.UTC(now.getUTCFullYear(), now.getUTCMonth(), now.getUTCDate());
  const monday = today - ((new Date(today).getUTCDay() + 6) % 7) * DAY;
  const iso = (ms: number) => new Date(ms).toISOString().slice(0, 10);
  return { start: iso(monday - 7 * DAY), end: iso(monday - DAY) };
}

const pct = (part: number, whole: number) => (whole > 0 ? `${Math.round((100 * part) / whole)}%` : '–');
const num = (x: number | null, digits = 1) => (x === null ? '–' : x.toFixed(digits));

type SiteWeek = { site_id: string; code: string; name: string; target: number; enrolled: number; this_week: number };

/**
 * The sponsor's weekly digest for one study: enrollment against target by site, new
 * enrollments in the period, data completeness and pooled baseline distributions. Blinded by
 * construction: it reads only site counts and the snapshot's pooled view, which has no arm.
 */
export async function composeDigest(db: Queryable, studyId: string, period: { start: string; end: string }) {
  const [study] = await queryRows<{ code: string; title: string; target_sample_size: number }>(
    db,
    `SELECT code, title, target_sample_size FROM study WHERE id = $1`,
    [studyId],
  );
  if (!study) return null;
  const sites = await queryRows<SiteWeek>(
    db,
    `SELECT s.id AS site_id, s.code, s.name, s.enrollment_target AS target,
            count(p.id) FILTER (WHERE p.status IN ('enrolled', 'withdrawn'))::int AS enrolled,
            count(p.id) FILTER (WHERE p.status IN ('enrolled', 'withdrawn')
              AND p.enrolled_at >= $2::date AND p.enrolled_at < $3::date + 1)::int AS this_week
       FROM site s LEFT JOIN participant p ON p.site_id = s.id
      WHERE s.study_id = $1 GROUP BY s.id ORDER BY s.code`,
    [studyId, period.start, period.end],
  );
  const head = await latestHead(db, studyId);
  const pooled = head ? (JSON.parse((await pooledText(db, studyId, head)) ?? 'null') as BalancePooledView | null) : null;
  const completenessBySite = new Map((pooled?.sites ?? []).map((s) => [s.siteId, s.completeness]));
  const total = sites.reduce((a, s) => a + s.enrolled, 0);
  const week = sites.reduce((a, s) => a + s.this_week, 0);

  const lines: string[] = [
    `${study.code} weekly digest, ${period.start} to ${period.end} (UTC)`,
    study.title,
    '',
    `Enrolled: ${total} of ${study.target_sample_size} (${pct(total, study.target_sample_size)}); ${week} new this week.`,
    '',
    'By site (enrolled / target, new this week, completeness of required baseline data):',
    ...sites.map((s) => {
      const c = completenessBySite.get(s.site_id);
      return `  ${s.code.padEnd(6)} ${s.name}: ${s.enrolled} / ${s.target} (${pct(s.enrolled, s.target)}), +${s.this_week}, completeness ${c === null || c === undefined ? '–' : `${c.toFixed(0)}%`}`;
    }),
    '',
    'Pooled baseline (all participants together; no figures by arm):',
  ];
  for (const c of pooled?.covariates ?? []) {
    const p = c.pooled;
    const unit = c.unit ? ` ${c.unit}` : '';
    if (c.kind === 'continuous') {
      lines.push(`  ${c.label}: mean ${num(p.mean)} (SD ${num(p.sd)})${unit}; median ${num(p.median)} [IQR ${num(p.q1)}–${num(p.q3)}]; missing ${p.missing}`);
    } else {
      const levels = (p.levels ?? []).map((l) => `${l.level} ${l.n}${l.percent === null ? "" : ` (${l.percent.toFixed(0)}%)`}`).join(', ');
      lines.push(`  ${c.label}: ${levels}; missing ${p.missing}`);
    }
  }
  if (!pooled) lines.push('  (no balance snapshot yet)');
  lines.push(
    '',
    head ? `Figures computed at ${head.computedAt.toISOString()}.` : '',
    'This digest is blinded: it never shows figures by arm. Results support, and do not replace, the judgement of the',
    "study's statistician, the protocol and the applicable regulations and ethics approvals.",
  );
  return { subject: `${study.code} weekly digest: ${total} of ${study.target_sample_size} enrolled (+${week})`, text: lines.join('\n') };
}

/**
 * Sends each active sponsor of each enrolling study its digest for the period, once: the
 * delivery row is claimed, the mail sent and the audit entry written in one transaction, so a
 * failed send rolls the claim back for the retry, and a repeated run finds the claim and skips.
 */
export async function sendWeeklyDigests(ctx: AppContext, now = new Date()): Promise<{ sent: number; skipped: number }> {
  const period = digestPeriod(now);
  const recipients = await queryRows<{ study_id: string; user_id: string; email: string }>(
    ctx.ds,
    `SELECT m.study_id, u.id AS user_id, u.email FROM membership m
       JOIN app_user u ON u.id = m.user_id JOIN study s ON s.id = m.study_id
      WHERE m.role = 'sponsor' AND u.status = 'active' AND s.status = 'enrolling'
      ORDER BY s.code, u.email`,
  );
  let sent = 0;
  let skipped = 0;
  const digests = new Map<string, Awaited<ReturnType<typeof composeDigest>>>();
  for (const r of recipients) {
    if (!digests.has(r.study_id)) digests.set(r.study_id, await composeDigest(ctx.ds, r.study_id, period));
    const digest = digests.get(r.study_id);
    if (!digest) continue;
    const delivered = await inTransaction(ctx.ds, async (tx) => {
      const claim = await queryRows<{ id: string }>(
        tx,
        `INSERT INTO digest_delivery (study_id, recipient_id, period_start, period_end) VALUES ($1, $2, $3, $4)
         ON CONFLICT (study_id, recipient_id, period_start) DO NOTHING RETURNING id`,
        [r.study_id, r.user_id, period.start, period.end],
      );
      if (!claim.length) return false;
      const ok = await ctx.mailer.send({ to: r.email, subject: digest.subject, text: digest.text });
      if (!ok) throw new Error(`digest mail to ${r.email} was not accepted`);
      await appendAudit(tx, SYSTEM, [
        {
          action: 'digest.sent',
          entityType: 'digest_delivery',
          entityId: claim[0]!.id,
          studyId: r.study_id,
          after: { recipientId: r.user_id, periodStart: period.start, periodEnd: period.end },
        },
      ]);
      return true;
    });
    if (delivered) sent += 1;
    else skipped += 1;
  }
  return { sent, skipped };
}
