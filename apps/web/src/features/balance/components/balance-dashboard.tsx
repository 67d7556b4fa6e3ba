import { useEffect, useRef, useState } from 'react';
import { useQueryClient } from '@tanstack/react-query';
import { balanceCautions, type BalanceArmsView } from '@counterpoise/contracts/balance';
import type { StudySummary } from '@counterpoise/contracts/studies';
import { Callout } from '../../../components/ui/callout.js';
import { Card, CardBody, CardHeader } from '../../../components/ui/card.js';
import { SelectField } from '../../../components/ui/field.js';
import { EmptyState, ErrorState, LoadingState } from '../../../components/ui/states.js';
import { StatisticianCaution } from '../../../components/ui/statistician-caution.js';
import { isApiError } from '../../../lib/api-client.js';
import { paths } from '../../../config/paths.js';
import { TextLink } from '../../../components/ui/text-link.js';
import { useAlerts } from '../api/get-alerts.js';
import { useBalanceArms } from '../api/get-balance.js';
import { useBalanceHistory } from '../api/get-balance-history.js';
import { baselineTableQueryKey } from '../api/get-baseline-table.js';
import { BalanceHistoryChart } from './balance-history-chart.js';
import { BaselineTableCard } from './baseline-table.js';
import { comparisonLabel, formatNumber } from './format.js';
import { FreshnessBar } from './freshness-bar.js';
import { SiteGrid } from './site-grid.js';
import { SmdDotChart, SmdLegend } from './smd-dot-chart.js';
import { smdRows } from './smd-rows.js';
import { SmdTable } from './smd-table.js';
import { WeightingPanel } from './weighting-panel.js';

/** The unblinded statistician's balance page: table, SMD chart, history, site grid, weighting. */
export function BalanceDashboard({ study }: { study: StudySummary }) {
  const [siteId, setSiteId] = useState<string | null>(null);
  // The overall snapshot lists the sites for the scope picker; with a site chosen, its own view is fetched too.
  const overall = useBalanceArms(study.id, null);
  const scoped = useBalanceArms(study.id, siteId);
  const balance = siteId ? scoped : overall;
  useRefreshOnNewSnapshot(study.id, overall.data?.snapshot.id);
  const sites = overall.data?.siteGrid ?? [];

  return (
    <div className="flex flex-col gap-5" data-testid="balance-dashboard">
      <div className="flex flex-wrap items-end justify-between gap-3">
        <h2 className="text-lg font-semibold text-ink">Baseline balance</h2>
        {balance.data && <FreshnessBar studyId={study.id} freshness={balance.data.freshness} canRecompute />}
      </div>
      {sites.length > 0 && (
        <SelectField
          label="Scope"
          hint="All sites together, or one site with its own group sizes and chance band."
          value={siteId ?? ''}
          onChange={(e) => setSiteId(e.currentTarget.value || null)}
          frameClassName="max-w-md"
          data-testid="balance-scope"
        >
          <option value="">All sites (overall)</option>
          {sites.map((s) => (
            <option key={s.siteId} value={s.siteId}>
              {s.code} · {s.name} ({s.enrolled} enrolled{s.judgeable ? '' : ', too small to judge'})
            </option>
          ))}
        </SelectField>
      )}
      <StatisticianCaution />
      {balance.isPending ? (
        <LoadingState label="Loading the latest balance snapshot…" />
      ) : balance.isError ? (
        isApiError(balance.error, 'not_found') ? (
          <div className="flex flex-col gap-3">
            <EmptyState title="No balance snapshot yet">
              The first snapshot is computed after the first enrollment. You can also start one now.
            </EmptyState>
            <FreshnessBar
              studyId={study.id}
              freshness={{ computedAt: null, recomputePending: false, enrolledCount: null }}
              canRecompute
            />
          </div>
        ) : (
          <ErrorState error={balance.error} onRetry={() => void balance.refetch()} />
        )
      ) : (
        <BalanceBody study={study} view={balance.data} siteId={siteId} />
      )}
    </div>
  );
}

/** A new snapshot id means new figures: refresh the table and the history with it. */
function useRefreshOnNewSnapshot(studyId: string, snapshotId: string | undefined) {
  const queryClient = useQueryClient();
  const seen = useRef<string | undefined>(undefined);
  useEffect(() => {
    if (!snapshotId) return;
    if (seen.current && seen.current !== snapshotId) {
      void queryClient.invalidateQueries({ queryKey: ['studies', studyId, 'balance', 'history'] });
      void queryClient.invalidateQueries({ queryKey: baselineTableQueryKey(studyId) });
    }
    seen.current = snapshotId;
  }, [queryClient, studyId, snapshotId]);
}

function BalanceBody({
  study,
  view,
  siteId,
}: {
  study: StudySummary;
  view: BalanceArmsView;
  siteId: string | null;
}) {
  const randomized = view.snapshot.studyKind === 'randomized_trial';
  const weighted = view.weighting?.status === 'ok';
  const rows = smdRows(view);
  const threshold = view.rules.smdThreshold;
  const reference = view.arms.find((a) => a.id === view.referenceArmId);
  const other = view.arms.find((a) => a.id !== view.referenceArmId);
  // Caution 11: a site below the minimum per arm gets no SMD chart at all, only its counts.
  const tooSmall = view.site !== null && !view.site.judgeable;

  return (
    <>
      {randomized && (
        <Callout tone="caution" role="note" title="Imbalance in a randomized trial is chance">
          <p data-testid="randomized-caution">{balanceCautions.randomizedImbalance}</p>
        </Callout>
      )}
      {randomized ? (
        <ChanceSummary view={view} scope={view.site ? `at site ${view.site.code}` : 'overall'} />
      ) : (
        <Callout tone="caution" role="note" title="The groups of a cohort are not randomized">
          <p data-testid="cohort-caution">
            Differences before weighting are expected here, and the chance band is only a yardstick. Judge the
            SMDs after weighting, the overlap of the propensity scores and the weights below; none of them
            speaks to covariates that were not measured.
          </p>
        </Callout>
      )}
      <OpenAlertsLine studyId={study.id} />
      {view.comparisonNote && <Callout tone="info">{view.comparisonNote}</Callout>}

      <Card>
        <CardHeader
          title="Standardized differences"
          description={
            other && reference
              ? `${comparisonLabel(view.arms, other.id, reference.id)}: positive values mean higher in ${other.code}. ${weighted ? 'Before and after weighting.' : ''}`
              : undefined
          }
        />
        <CardBody className="flex flex-col gap-4">
          {tooSmall && view.site ? (
            <Callout tone="caution" role="note" title={`Site ${view.site.code} is too small to judge`}>
              <p data-testid="site-too-small">
                {balanceCautions.smallSites} This site has{' '}
                {view.site.nByArm
                  .map((a) => `${a.n} in ${view.arms.find((x) => x.id === a.armId)?.code ?? 'an arm'}`)
                  .join(' and ')}
                ; the minimum is {view.rules.minPerArmForSiteAlerts} per arm, so its SMDs are not shown.
              </p>
            </Callout>
          ) : rows.length === 0 ? (
            <p className="text-sm text-graphite">No covariates in the design yet.</p>
          ) : (
            <>
              <SmdDotChart rows={rows} threshold={threshold} weighted={weighted} />
              <SmdLegend threshold={threshold} weighted={weighted} />
              <details className="text-sm">
                <summary className="cursor-pointer font-semibold text-spruce-deep">
                  Show the figures as a table
                </summary>
                <div className="mt-3">
                  <SmdTable rows={rows} threshold={threshold} weighted={weighted} />
                </div>
              </details>
            </>
          )}
        </CardBody>
      </Card>

      {view.weighting && !siteId && <WeightingPanel view={view} weighting={view.weighting} />}

      <div className="grid gap-5 2xl:grid-cols-2">
        <Card>
          <CardHeader
            title="Balance over enrollment"
            description="One covariate at a time: the SMD at each snapshot against the number enrolled, with the chance band narrowing as n grows."
          />
          <CardBody>
            <HistoryCard studyId={study.id} siteId={siteId} />
          </CardBody>
        </Card>
        {!siteId && (
          <Card>
            <CardHeader
              title="By site"
              description="Each site's SMD for every covariate, with the site's own group sizes behind its chance band."
            />
            <CardBody>
              {view.siteGrid && view.siteGrid.length > 0 ? (
                <SiteGrid view={view} />
              ) : (
                <p className="text-sm text-graphite">No site has enrolled anyone yet.</p>
              )}
            </CardBody>
          </Card>
        )}
      </div>

      <BaselineTableCard studyId={study.id} siteId={siteId} />
    </>
  );
}

function HistoryCard({ studyId, siteId }: { studyId: string; siteId: string | null }) {
  const history = useBalanceHistory(studyId, siteId);
  if (history.isPending) return <LoadingState label="Loading the balance history…" />;
  if (history.isError) return <ErrorState error={history.error} onRetry={() => void history.refetch()} />;
  return <BalanceHistoryChart history={history.data} />;
}

/** How many crossings chance alone would give, next to how many there are. */
function ChanceSummary({ view, scope }: { view: BalanceArmsView; scope: string }) {
  const c = view.chance;
  return (
    <Callout tone="info" role="note" title="What chance alone would give">
      <p data-testid="chance-summary">
        <span className="figure">{c.observed}</span> of <span className="figure">{c.covariateCount}</span>{' '}
        covariates cross |SMD| {c.threshold} {scope}. At these group sizes, chance alone gives about{' '}
        <span className="figure">{formatNumber(c.expected, 1)}</span> such crossings on average
        {c.probabilityAtLeastOne !== null && (
          <>
            {' '}
            (at least one with probability{' '}
            <span className="figure">{formatNumber(c.probabilityAtLeastOne, 2)}</span>, if the covariates were
            independent)
          </>
        )}
        .
      </p>
    </Callout>
  );
}

/** A pointer to the alerts page, so the chart and the list of what fired are one click apart. */
function OpenAlertsLine({ studyId }: { studyId: string }) {
  const alerts = useAlerts(studyId, 'all');
  const open = (alerts.data?.alerts ?? []).filter((a) => a.state === 'open');
  if (!alerts.data) return null;
  const beyond = open.filter((a) => a.rule === 'smd_beyond_chance').length;
  return (
    <p className="text-sm text-graphite" data-testid="open-alerts-line">
      {open.length === 0 ? (
        'No open balance alerts.'
      ) : (
        <>
          <span className="figure text-ink">{open.length}</span> open alert{open.length === 1 ? '' : 's'}, of
          which <span className="figure text-ink">{beyond}</span> beyond the chance band.{' '}
        </>
      )}{' '}
      <TextLink to={paths.studies.tab.href(studyId, 'alerts')}>Review alerts</TextLink>
    </p>
  );
}
