import type { AlertRule, ArmComparison, BalanceRules } from '@counterpoise/contracts/balance';
import { balanceCautions } from '@counterpoise/contracts/balance';
import type { EntityManager } from 'typeorm';
import type { Logger } from 'pino';
import type { AppContext } from '../../app-context.js';
import type { AuditActor, AuditEntry } from '../audit/audit.service.js';
import { chanceCrossings } from './balance-compute.js';
import { rows, type Queryable, type StudyConfig } from './balance-config.js';
import type { SnapshotBody } from './balance-snapshot.js';

/** Changes made by the recompute job are recorded under this actor. */
export const systemActor = (jobId: string | null): AuditActor => ({
  userId: null,
  email: null,
  role: 'system',
  requestId: jobId ? `job:${jobId}` : null,
});

type Condition = {
  rule: AlertRule;
  covariateKey: string;
  siteId: string | null;
  armId: string;
  referenceArmId: string;
  comparison: ArmComparison;
};

const conditionKey = (rule: string, cov: string, site: string | null, arm: string) =>
  `${rule}|${cov}|${site ?? 'overall'}|${arm}`;

/** Which rules hold for one comparison; null when it cannot be judged (no SMD, too small a site). */
function holding(rules: BalanceRules, c: ArmComparison): Map<AlertRule, boolean> {
  const out = new Map<AlertRule, boolean>();
  if (c.smd !== null) out.set('smd_threshold', c.flags.smdOverThreshold);
  if (c.varianceRatio !== null) out.set('variance_ratio', c.flags.varianceRatioOutside);
  if (c.smd !== null && c.chanceBand !== null)
    out.set('smd_beyond_chance', rules.chanceAware && c.flags.beyondChance);
  return out;
}

/**
 * Cohort conditions from the weighted comparison: |SMD after weighting| over the threshold and
 * the weighted variance ratio outside its band. Without a usable weighting model, the unweighted
 * figures stand in (still without the chance rule).
 */
function considerWeighted(
  body: SnapshotBody,
  rules: BalanceRules,
  evaluated: Map<string, { condition: Condition; holds: boolean }>,
) {
  const w = body.weighting;
  for (const cov of body.covariates) {
    for (const c of cov.balance.comparisons) {
      const after = w?.status === 'ok' ? w.covariates.find((x) => x.key === cov.key) : undefined;
      const smd = after ? after.smdAfter : c.smd;
      const vr = after ? after.varianceRatioAfter : c.varianceRatio;
      const comparison: ArmComparison = { ...c, smd, varianceRatio: vr, chanceBand: null };
      const add = (rule: AlertRule, holds: boolean) =>
        evaluated.set(conditionKey(rule, cov.key, null, c.armId), {
          condition: {
            rule,
            covariateKey: cov.key,
            siteId: null,
            armId: c.armId,
            referenceArmId: c.referenceArmId,
            comparison,
          },
          holds,
        });
      if (smd !== null) add('smd_threshold', Math.abs(smd) > rules.smdThreshold);
      if (vr !== null) add('variance_ratio', vr < rules.varianceRatio[0] || vr > rules.varianceRatio[1]);
    }
  }
}

type LiveAlert = {
  id: string;
  rule: AlertRule;
  covariate_key: string;
  site_id: string | null;
  arm_id: string;
  state: string;
};

export type AlertChanges = { opened: string[]; cleared: string[]; updated: number };

/**
 * Opens an alert when a rule starts to hold, keeps it (with its latest figures) while it holds,
 * and clears it when it stops; site rules only where every arm has the minimum per arm. A
 * condition that cannot be judged this time leaves its alert as it is. Each new alert gets a
 * notification row per statistician (unique per alert, recipient and opening). Audit entries are
 * returned, for the caller to append last in the same transaction.
 */
export async function evaluateAlerts(
  tx: EntityManager,
  config: StudyConfig,
  snapshotId: string,
  body: SnapshotBody,
  sites: Map<string, SnapshotBody>,
): Promise<{ changes: AlertChanges; audit: AuditEntry[] }> {
  const rules = body.rules;
  const evaluated = new Map<string, { condition: Condition; holds: boolean }>();
  const consider = (siteId: string | null, covariates: SnapshotBody['covariates']) => {
    for (const cov of covariates) {
      for (const c of cov.balance.comparisons) {
        for (const [rule, holds] of holding(rules, c)) {
          evaluated.set(conditionKey(rule, cov.key, siteId, c.armId), {
            condition: {
              rule,
              covariateKey: cov.key,
              siteId,
              armId: c.armId,
              referenceArmId: c.referenceArmId,
              comparison: c,
            },
            holds,
          });
        }
      }
    }
  };
  if (config.kind === 'observational_cohort') {
    // Groups that were not randomized differ by design; the question is whether weighting
    // balanced them. So a cohort alerts on the weighted figures, overall, and chance plays no part.
    considerWeighted(body, rules, evaluated);
  } else {
    consider(null, body.covariates);
    const siteRules = new Set(config.rules.siteRules);
    for (const [siteId, detail] of sites) {
      if (!detail.site?.judgeable) continue;
      consider(siteId, detail.covariates);
      for (const [key, e] of evaluated)
        if (e.condition.siteId === siteId && !siteRules.has(e.condition.rule)) evaluated.delete(key);
    }
  }

  const live = await rows<LiveAlert>(
    tx,
    `SELECT id, rule, covariate_key, site_id, arm_id, state FROM alert WHERE study_id = $1 AND state IN ('open', 'acknowledged')`,
    [config.id],
  );
  const liveByKey = new Map(live.map((a) => [conditionKey(a.rule, a.covariate_key, a.site_id, a.arm_id), a]));
  const openings = new Map(
    (
      await rows<{ k: string; opening: number }>(
        tx,
        `SELECT rule || '|' || covariate_key || '|' || COALESCE(site_id::text, 'overall') || '|' || arm_id AS k, max(opening)::int AS opening
           FROM alert WHERE study_id = $1 GROUP BY 1`,
        [config.id],
      )
    ).map((r) => [r.k, r.opening]),
  );
  const covariateKeys = new Set(config.covariates.map((c) => c.key));
  // One e-mail per drift episode of a covariate at a scope: a second rule starting to hold while
  // another is live for the same covariate, site and arm is listed in the app but not e-mailed.
  const scopeKey = (cov: string, site: string | null, arm: string) => `${cov}|${site ?? 'overall'}|${arm}`;
  const liveScopes = new Set(live.map((a) => scopeKey(a.covariate_key, a.site_id, a.arm_id)));
  const notify: string[] = [];
  const stillHolding: {
    id: string;
    smd: number | null;
    vr: number | null;
    hw: number | null;
    na: number;
    nr: number;
  }[] = [];
  const changes: AlertChanges = { opened: [], cleared: [], updated: 0 };
  const audit: AuditEntry[] = [];
  const figures = (c: ArmComparison) => ({
    smd: c.smd,
    varianceRatio: c.varianceRatio,
    chanceHalfWidth: c.chanceBand?.halfWidth ?? null,
    nArm: c.nArm,
    nReference: c.nReference,
  });

  for (const [key, { condition: cd, holds }] of evaluated) {
    const existing = liveByKey.get(key);
    const c = cd.comparison;
    if (holds && !existing) {
      const opening = (openings.get(key) ?? 0) + 1;
      const [created] = await rows<{ id: string }>(
        tx,
        `INSERT INTO alert (study_id, rule, covariate_key, site_id, arm_id, reference_arm_id, opening, state, opened_snapshot_id,
                            last_smd, last_variance_ratio, last_half_width, last_n_arm, last_n_reference, idempotency_key)
         VALUES ($1, $2, $3, $4, $5, $6, $7, 'open', $8, $9, $10, $11, $12, $13, $14)
         ON CONFLICT (idempotency_key) DO NOTHING RETURNING id`,
        [
          config.id,
          cd.rule,
          cd.covariateKey,
          cd.siteId,
          cd.armId,
          cd.referenceArmId,
          opening,
          snapshotId,
          c.smd,
          c.varianceRatio,
          c.chanceBand?.halfWidth ?? null,
          c.nArm,
          c.nReference,
          `${config.id}|${key}|${opening}`,
        ],
      );
      if (!created) continue;
      changes.opened.push(created.id);
      if (!liveScopes.has(scopeKey(cd.covariateKey, cd.siteId, cd.armId))) notify.push(created.id);
      audit.push({
        action: 'balance.alert_opened',
        entityType: 'alert',
        entityId: created.id,
        studyId: config.id,
        siteId: cd.siteId,
        after: {
          rule: cd.rule,
          covariate: cd.covariateKey,
          armId: cd.armId,
          referenceArmId: cd.referenceArmId,
          opening,
          ...figures(c),
        },
        revealsAllocation: true,
      });
    } else if (existing && holds) {
      stillHolding.push({
        id: existing.id,
        smd: c.smd,
        vr: c.varianceRatio,
        hw: c.chanceBand?.halfWidth ?? null,
        na: c.nArm,
        nr: c.nReference,
      });
      changes.updated++;
    } else if (existing && !holds) {
      await clearAlert(tx, existing, figures(c), audit, config.id);
      changes.cleared.push(existing.id);
    }
  }
  if (stillHolding.length) {
    await tx.query(
      `UPDATE alert a SET last_evaluated_at = now(), last_smd = x.smd, last_variance_ratio = x.vr, last_half_width = x.hw,
              last_n_arm = x.na, last_n_reference = x.nr
         FROM jsonb_to_recordset($1::jsonb) AS x(id uuid, smd float8, vr float8, hw float8, na int, nr int)
        WHERE a.id = x.id`,
      [JSON.stringify(stillHolding)],
    );
  }
  // Alerts for covariates no longer in the design cannot hold any more.
  for (const a of live) {
    if (!covariateKeys.has(a.covariate_key) && !changes.cleared.includes(a.id)) {
      await clearAlert(tx, a, { reason: 'covariate no longer in the design' }, audit, config.id);
      changes.cleared.push(a.id);
    }
  }

  if (notify.length) {
    await tx.query(
      `INSERT INTO alert_notification (alert_id, recipient_user_id, recipient_email, idempotency_key)
       SELECT a.id, u.id, u.email, a.idempotency_key || '|' || u.id
         FROM alert a
         JOIN membership m ON m.study_id = a.study_id AND m.role = 'statistician'
         JOIN app_user u ON u.id = m.user_id AND u.status = 'active'
        WHERE a.id = ANY($1::uuid[])
       ON CONFLICT (idempotency_key) DO NOTHING`,
      [notify],
    );
  }
  return { changes, audit };
}

async function clearAlert(
  tx: EntityManager,
  a: LiveAlert,
  after: Record<string, unknown>,
  audit: AuditEntry[],
  studyId: string,
): Promise<void> {
  await tx.query(
    `UPDATE alert SET state = 'cleared', cleared_at = now(), last_evaluated_at = now() WHERE id = $1`,
    [a.id],
  );
  audit.push({
    action: 'balance.alert_cleared',
    entityType: 'alert',
    entityId: a.id,
    studyId,
    siteId: a.site_id,
    before: { state: a.state },
    after: { state: 'cleared', rule: a.rule, covariate: a.covariate_key, ...after },
    revealsAllocation: true,
  });
}

const RULE_TEXT: Record<AlertRule, string> = {
  smd_threshold: '|SMD| above the threshold',
  variance_ratio: 'variance ratio outside the acceptable band',
  smd_beyond_chance: 'SMD beyond the 95% chance band',
};

const fmt = (x: number | null, digits = 3) => (x === null ? 'n/a' : x.toFixed(digits));

type PendingNotification = {
  id: string;
  recipient_email: string;
  recipient_user_id: string;
  rule: AlertRule;
  covariate_key: string;
  site_id: string | null;
  arm_id: string;
  reference_arm_id: string;
  last_smd: number | null;
  last_variance_ratio: number | null;
  last_half_width: number | null;
  last_n_arm: number;
  last_n_reference: number;
  opened_at: Date;
};

/** The text of one alert e-mail (to an unblinded statistician, so arms may be named). */
export function alertMailText(
  config: StudyConfig,
  items: PendingNotification[],
  appOrigin: string,
): { subject: string; text: string } {
  const arm = (id: string) => config.arms.find((a) => a.id === id);
  const site = (id: string | null) => (id ? config.sites.find((s) => s.id === id) : undefined);
  const cov = (k: string) => config.covariates.find((c) => c.key === k);
  const threshold = config.rules.smdThreshold;
  const lines: string[] = [
    `Baseline balance in ${config.code}: ${items.length} new alert${items.length === 1 ? '' : 's'}.`,
    '',
  ];
  for (const it of items) {
    const s = site(it.site_id);
    const where = s ? `site ${s.code} (${s.name})` : 'all sites';
    const crossings = chanceCrossings(
      config.covariates.length,
      it.last_n_arm,
      it.last_n_reference,
      threshold,
    );
    lines.push(
      `- ${cov(it.covariate_key)?.label ?? it.covariate_key} [${it.covariate_key}], ${where}: ${RULE_TEXT[it.rule]}.`,
      `  ${arm(it.arm_id)?.code ?? it.arm_id} vs ${arm(it.reference_arm_id)?.code ?? it.reference_arm_id} (n = ${it.last_n_arm} vs ${it.last_n_reference}): ` +
        `SMD ${fmt(it.last_smd)}, 95% chance band +/-${fmt(it.last_half_width)}` +
        (it.last_variance_ratio !== null ? `, variance ratio ${fmt(it.last_variance_ratio, 2)}` : '') +
        '.',
      crossings
        ? `  At these group sizes chance alone gives on average ${crossings.expected.toFixed(1)} of ${config.covariates.length} covariates with |SMD| > ${threshold}.`
        : '  Too few participants for a chance estimate.',
    );
    // For the chance-aware rule the telling figure is how many covariates chance alone puts
    // beyond the band itself (1 - level of them, by the band's construction).
    const band =
      it.rule === 'smd_beyond_chance' && it.last_half_width
        ? chanceCrossings(config.covariates.length, it.last_n_arm, it.last_n_reference, it.last_half_width)
        : null;
    if (band) {
      lines.push(
        `  Beyond the 95% chance band itself, chance alone gives on average ${band.expected.toFixed(1)} of ${config.covariates.length} covariates.`,
      );
    }
  }
  lines.push('', `Open the balance dashboard: ${appOrigin}/studies/${config.id}/balance`, '');
  if (config.kind === 'randomized_trial') lines.push(balanceCautions.randomizedImbalance);
  else lines.push(balanceCautions.weighting);
  lines.push(
    balanceCautions.judgement,
    '',
    'You receive this because you are a statistician of the study. Nothing more is sent for these alerts until they clear and return.',
  );
  return {
    subject: `[Counterpoise] ${config.code}: baseline balance alert${items.length === 1 ? '' : 's'} (${items.length})`,
    text: lines.join('\n'),
  };
}

/**
 * Sends the study's unsent alert notifications, one e-mail per recipient, and marks them sent.
 * Runs after the snapshot transaction commits; if SMTP refuses, it throws so the job is retried,
 * and the retry sends only what is still unsent. (A crash between the SMTP server accepting a
 * message and the row being marked can still repeat that one message: at-least-once.)
 */
export async function sendPendingNotifications(
  ctx: AppContext,
  db: Queryable,
  config: StudyConfig,
  log?: Logger,
): Promise<number> {
  const pending = await rows<PendingNotification>(
    db,
    `SELECT n.id, n.recipient_email, n.recipient_user_id, a.rule, a.covariate_key, a.site_id, a.arm_id, a.reference_arm_id,
            a.last_smd, a.last_variance_ratio, a.last_half_width, a.last_n_arm, a.last_n_reference, a.opened_at
       FROM alert_notification n JOIN alert a ON a.id = n.alert_id
      WHERE a.study_id = $1 AND n.sent_at IS NULL AND a.state IN ('open', 'acknowledged')
      ORDER BY n.recipient_email, a.opened_at, a.covariate_key`,
    [config.id],
  );
  const byRecipient = new Map<string, PendingNotification[]>();
  for (const p of pending)
    byRecipient.set(p.recipient_email, [...(byRecipient.get(p.recipient_email) ?? []), p]);
  let sent = 0;
  let failed = 0;
  for (const [to, items] of byRecipient) {
    const { subject, text } = alertMailText(config, items, ctx.env.APP_ORIGIN);
    if (await ctx.mailer.send({ to, subject, text })) {
      await db.query(`UPDATE alert_notification SET sent_at = now() WHERE id = ANY($1::uuid[])`, [
        items.map((i) => i.id),
      ]);
      sent++;
    } else failed++;
  }
  if (failed) {
    log?.warn({ failed }, 'alert e-mail not accepted by SMTP; the job will retry');
    throw new Error(`${failed} alert e-mail(s) could not be sent`);
  }
  return sent;
}
