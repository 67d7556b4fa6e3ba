import {
  alertListQuerySchema,
  alertPatchBodySchema,
  balanceCautions,
  balanceHistoryQuerySchema,
  balanceQuerySchema,
  baselineTableQuerySchema,
  type BalanceArmsView,
  type BalanceHistory,
  type BalancePooledView,
  type BaselineTable,
} from '@counterpoise/contracts/balance';
import { gzipSync } from 'node:zlib';
import { Router, type Request, type Response } from 'express';
import { z } from 'zod';
import type { AppContext } from '../../app-context.js';
import { inTransaction } from '../../db/transaction.js';
import { AppError, forbidden, notFound } from '../../http/app-error.js';
import { toCsv } from '../../http/csv.js';
import { body, params, query } from '../../http/validate.js';
import { appendAudit } from '../audit/audit.service.js';
import { authorize, roleLabel, type StudyAccess } from '../policy/policy.js';
import { rows } from './balance-config.js';
import type { PooledBody, TrendPoint } from './balance-snapshot.js';
import {
  alertDto,
  alertSelect,
  armsText,
  baselinePValues,
  baselineTable,
  freshness,
  forgetHead,
  latestHead,
  latestHeadCached,
  listAlerts,
  pooledText,
  type SnapshotHead,
} from './balance.service.js';
import './balance.operations.js';

const studyParams = z.object({ studyId: z.uuid() });
const alertParams = z.object({ studyId: z.uuid(), alertId: z.uuid() });

async function assertSite(ctx: AppContext, studyId: string, siteId: string | undefined): Promise<void> {
  if (!siteId) return;
  const [s] = await rows<{ id: string }>(ctx.ds, `SELECT id FROM site WHERE id = $1 AND study_id = $2`, [siteId, studyId]);
  if (!s) throw notFound('Site');
}

function requireArms(access: StudyAccess): void {
  if (!access.permissions.includes('balance.arms')) {
    throw forbidden('Arm-level balance is shown to the unblinded statistician only');
  }
}

async function noSnapshot(ctx: AppContext, studyId: string): Promise<never> {
  throw new AppError('not_found', 'No balance snapshot has been computed for this study yet', {
    freshness: await freshness(ctx.ds, studyId, null, null),
  });
}

/** Encoded bodies of the hot path (plain and gzip), by snapshot and freshness; a snapshot never changes once written. */
const bodyCache = new Map<string, { plain: Buffer; gzip: Buffer }>();

/**
 * Sends the stored snapshot text with freshness spliced in, without parsing it (the hot path).
 * It is compressed once per snapshot, not per request. The ETag names the snapshot and its
 * freshness, so a poller that already has it gets a 304.
 */
function sendWithFreshness(req: Request, res: Response, key: string, fresh: { recomputePending: boolean }, storedJson: string, snapshotId: string): void {
  const tag = `${snapshotId}-${fresh.recomputePending ? 'p' : 'c'}`;
  const cacheKey = `${key}|${tag}`;
  let body = bodyCache.get(cacheKey);
  if (!body) {
    const plain = Buffer.from(`{"freshness":${JSON.stringify(fresh)},${storedJson.slice(1)}`);
    body = { plain, gzip: gzipSync(plain, { level: 6 }) };
    if (bodyCache.size >= 100) bodyCache.delete(bodyCache.keys().next().value as string);
    bodyCache.set(cacheKey, body);
  }
  res.setHeader('ETag', `"${tag}"`);
  res.setHeader('Vary', 'Accept-Encoding');
  res.type('application/json');
  if (req.acceptsEncodings('gzip') === 'gzip' && !req.fresh) {
    res.setHeader('Content-Encoding', 'gzip');
    res.send(body.gzip);
    return;
  }
  res.send(body.plain);
}

const freshnessOf = (head: SnapshotHead) => ({
  computedAt: head.computedAt.toISOString(),
  recomputePending: head.pending,
  enrolledCount: head.enrolled,
});

async function latestArmsView(ctx: AppContext, studyId: string, siteId: string | null): Promise<BalanceArmsView> {
  const head = await latestHead(ctx.ds, studyId);
  const text = head ? await armsText(ctx.ds, studyId, siteId, head) : null;
  if (!head || !text) return noSnapshot(ctx, studyId);
  const stored = JSON.parse(text) as Omit<BalanceArmsView, 'freshness'>;
  return { ...stored, freshness: freshnessOf(head) };
}

export function balanceRoutes(ctx: AppContext): Router {
  const r = Router();

  r.get('/studies/:studyId/balance', async (req, res) => {
    const { studyId } = params(req, studyParams);
    const access = authorize(req, studyId, 'balance.pooled');
    const q = query(req, balanceQuerySchema);
    await assertSite(ctx, studyId, q.site);
    const arms = q.view ? q.view === 'arms' : access.permissions.includes('balance.arms');
    if (arms) requireArms(access);
    const head = await latestHeadCached(ctx.ds, studyId);
    if (!head) return noSnapshot(ctx, studyId);
    if (arms) {
      const text = await armsText(ctx.ds, studyId, q.site ?? null, head);
      if (!text) return noSnapshot(ctx, studyId);
      sendWithFreshness(req, res, `${studyId}|arms|${q.site ?? ''}`, freshnessOf(head), text, head.id);
      return;
    }
    // Pooled and blinded: from the pooled column only, which carries no arm.
    const text = await pooledText(ctx.ds, studyId, head);
    if (!text) return noSnapshot(ctx, studyId);
    if (!q.site) {
      sendWithFreshness(req, res, `${studyId}|pooled`, freshnessOf(head), text, head.id);
      return;
    }
    const pooled = JSON.parse(text) as PooledBody;
    const view: BalancePooledView = { ...pooled, sites: pooled.sites.filter((s) => s.siteId === q.site), freshness: freshnessOf(head) };
    res.json(view);
  });

  r.get('/studies/:studyId/balance/history', async (req, res) => {
    const { studyId } = params(req, studyParams);
    requireArms(authorize(req, studyId, 'balance.pooled'));
    const q = query(req, balanceHistoryQuerySchema);
    await assertSite(ctx, studyId, q.site);
    const limit = q.points ?? 200;
    // Evenly thinned over the snapshots, always keeping the latest.
    const points = await rows<{ computed_at: Date; enrolled_count: number; t: Record<string, TrendPoint[]> | null }>(
      ctx.ds,
      `WITH s AS (
         SELECT id, row_number() OVER (ORDER BY computed_at) AS rn, count(*) OVER () AS total
           FROM balance_snapshot WHERE study_id = $1)
       SELECT b.computed_at, b.enrolled_count, ${q.site ? `b.trend -> 'sites' -> $3::text` : `b.trend -> 'overall'`} AS t
         FROM s JOIN balance_snapshot b ON b.id = s.id
        WHERE s.total <= $2 OR s.rn = s.total OR (s.rn - 1) % ceil(s.total::numeric / $2)::int = 0
        ORDER BY b.computed_at`,
      q.site ? [studyId, limit, q.site] : [studyId, limit],
    );
    const head = await latestHead(ctx.ds, studyId);
    const latestText = head ? await armsText(ctx.ds, studyId, null, head) : null;
    const meta = latestText ? (JSON.parse(latestText) as Omit<BalanceArmsView, 'freshness'>) : null;
    const series: BalanceHistory['series'] = [];
    for (const cov of meta?.covariates ?? []) {
      for (const cmp of cov.balance.comparisons) {
        series.push({
          key: cov.key,
          label: cov.label,
          armId: cmp.armId,
          points: points.map((p) => {
            const hit = p.t?.[cov.key]?.find((x) => x[0] === cmp.armId);
            return {
              computedAt: p.computed_at.toISOString(),
              enrolledCount: p.enrolled_count,
              smd: hit?.[1] ?? null,
              halfWidth: hit?.[2] ?? null,
            };
          }),
        });
      }
    }
    const out: BalanceHistory = {
      freshness: head ? freshnessOf(head) : await freshness(ctx.ds, studyId, null, null),
      arms: meta?.arms ?? [],
      referenceArmId: meta?.referenceArmId ?? null,
      comparisonNote: meta?.comparisonNote ?? null,
      threshold: meta?.rules.smdThreshold ?? 0.1,
      scope: { siteId: q.site ?? null },
      series,
      cautions: meta?.cautions ?? [balanceCautions.judgement],
    };
    res.json(out);
  });

  r.post('/studies/:studyId/balance/recompute', async (req, res) => {
    const { studyId } = params(req, studyParams);
    requireArms(authorize(req, studyId, 'balance.pooled'));
    const actor = req.actor!;
    const jobId = await inTransaction(ctx.ds, async (tx) => {
      // Its own singleton key, so a queued incremental run cannot swallow the request for a full one.
      const id = await ctx.jobs.send(tx, 'balance.recompute', { studyId, reason: 'manual', full: true }, { singletonKey: `full:${studyId}` });
      await appendAudit(tx, { userId: actor.userId, email: actor.email, role: roleLabel(actor, studyId), requestId: req.requestId }, [
        {
          action: 'balance.recompute_requested',
          entityType: 'study',
          entityId: studyId,
          studyId,
          after: { jobId: id, full: true, alreadyPending: id === null },
        },
      ]);
      return id;
    });
    forgetHead(studyId);
    res.status(202).json({ jobId, alreadyPending: jobId === null });
  });

  r.get('/studies/:studyId/alerts', async (req, res) => {
    const { studyId } = params(req, studyParams);
    authorize(req, studyId, 'alerts.manage');
    const q = query(req, alertListQuerySchema);
    const [study] = await rows<{ kind: string }>(ctx.ds, `SELECT kind FROM study WHERE id = $1`, [studyId]);
    const cautions =
      study?.kind === 'randomized_trial'
        ? [balanceCautions.randomizedImbalance, balanceCautions.judgement]
        : [balanceCautions.weighting, balanceCautions.judgement];
    res.json({ alerts: await listAlerts(ctx.ds, studyId, q.state), cautions });
  });

  r.patch('/studies/:studyId/alerts/:alertId', async (req, res) => {
    const { studyId, alertId } = params(req, alertParams);
    authorize(req, studyId, 'alerts.manage');
    const input = body(req, alertPatchBodySchema);
    const actor = req.actor!;
    const alert = await inTransaction(ctx.ds, async (tx) => {
      const [current] = await rows<{ state: string; acknowledge_comment: string | null; site_id: string | null }>(
        tx,
        `SELECT state, acknowledge_comment, site_id FROM alert WHERE id = $1 AND study_id = $2 FOR UPDATE`,
        [alertId, studyId],
      );
      if (!current) throw notFound('Alert');
      if (current.state === 'cleared') throw new AppError('conflict', 'This alert has already cleared; nothing to acknowledge');
      await tx.query(
        `UPDATE alert SET state = 'acknowledged', acknowledged_by = $2, acknowledged_at = now(), acknowledge_comment = $3 WHERE id = $1`,
        [alertId, actor.userId, input.comment],
      );
      await appendAudit(tx, { userId: actor.userId, email: actor.email, role: roleLabel(actor, studyId), requestId: req.requestId }, [
        {
          action: 'balance.alert_acknowledged',
          entityType: 'alert',
          entityId: alertId,
          studyId,
          siteId: current.site_id,
          before: { state: current.state, comment: current.acknowledge_comment },
          after: { state: 'acknowledged', comment: input.comment },
          reason: input.comment,
          revealsAllocation: true,
        },
      ]);
      const [row] = await rows<Parameters<typeof alertDto>[0]>(tx, `${alertSelect} WHERE a.id = $1`, [alertId]);
      return alertDto(row!);
    });
    res.json({ alert });
  });

  const table = async (req: Request): Promise<{ studyId: string; out: BaselineTable }> => {
    const { studyId } = params(req, studyParams);
    requireArms(authorize(req, studyId, 'balance.pooled'));
    const q = query(req, baselineTableQuerySchema);
    await assertSite(ctx, studyId, q.site);
    const view = await latestArmsView(ctx, studyId, q.site ?? null);
    const base = baselineTable(view);
    const pValues = q.pvalues ? await baselinePValues(ctx.ds, studyId, view.snapshot.studyKind, view) : null;
    return { studyId, out: { ...base, freshness: view.freshness, pValues } };
  };

  r.get('/studies/:studyId/baseline-table', async (req, res) => {
    res.json((await table(req)).out);
  });

  r.get('/studies/:studyId/baseline-table.csv', async (req, res) => {
    const { out } = await table(req);
    const header = ['covariate', 'label', 'statistic', 'level', ...out.columns.map((c) => `${c.label} (n=${c.n})`)];
    const body = out.rows.map((row) => [row.covariateKey, row.label, row.statistic, row.level, ...row.cells.map((c) => c.text)]);
    const tail: unknown[][] = [[], ['note', `snapshot computed at ${out.freshness.computedAt ?? 'never'} (UTC)`], ...out.cautions.map((c) => ['note', c])];
    if (out.pValues) {
      // Kept apart from the table, under its caution.
      tail.push([], ['p-values (labelled)', out.pValues.caution], ['method', out.pValues.method]);
      const armLabel = (id: string) => out.columns.find((c) => c.column === id)?.label ?? id;
      tail.push(['p-value', 'covariate', 'arm', 'reference arm', 'p', 'test', 'note']);
      for (const p of out.pValues.values) {
        tail.push(['p-value', p.covariateKey, armLabel(p.armId), armLabel(p.referenceArmId), p.pValue ?? '', p.test, p.note ?? '']);
      }
    }
    res.setHeader('Content-Type', 'text/csv; charset=utf-8');
    res.setHeader('Content-Disposition', 'attachment; filename="counterpoise-baseline-table.csv"');
    res.send(toCsv(header, [...body, ...tail]));
  });

  return r;
}
