import { useState, type ReactNode } from 'react';
import { useQueries } from '@tanstack/react-query';
import { balanceCautions, type Alert } from '@counterpoise/contracts/balance';
import type { StudySummary } from '@counterpoise/contracts/studies';
import { Badge, type BadgeTone } from '../../../components/ui/badge.js';
import { Button } from '../../../components/ui/button.js';
import { Callout } from '../../../components/ui/callout.js';
import { Card, CardBody } from '../../../components/ui/card.js';
import { EmptyState, ErrorState, LoadingState } from '../../../components/ui/states.js';
import { StatisticianCaution } from '../../../components/ui/statistician-caution.js';
import { useAlerts, type AlertStateFilter } from '../api/get-alerts.js';
import { balanceArmsQueryOptions } from '../api/get-balance.js';
import { AcknowledgeAlertForm } from './acknowledge-alert-form.js';
import { formatBand, formatDateTime, formatNumber, formatSmd } from './format.js';

const ruleLabel: Record<Alert['rule'], string> = {
  smd_threshold: '|SMD| over the threshold',
  variance_ratio: 'Variance ratio outside the range',
  smd_beyond_chance: 'SMD beyond the 95% chance band',
};

const stateTone: Record<Alert['state'], BadgeTone> = {
  open: 'brick',
  acknowledged: 'harbor',
  cleared: 'moss',
};

const filters: Array<{ id: AlertStateFilter; label: string }> = [
  { id: 'all', label: 'All' },
  { id: 'open', label: 'Open' },
  { id: 'acknowledged', label: 'Acknowledged' },
  { id: 'cleared', label: 'Cleared' },
];

type ChanceInfo = { expected: number | null; covariateCount: number; threshold: number };

/** The statistician's alert list, with the chance context each alert needs to be read correctly. */
export function AlertsView({ study }: { study: StudySummary }) {
  const [filter, setFilter] = useState<AlertStateFilter>('all');
  const alerts = useAlerts(study.id, filter);
  const randomized = study.kind === 'randomized_trial';

  // "How many crossings would chance give" depends on the scope's group sizes: overall or the site's.
  const scopes = [...new Set((alerts.data?.alerts ?? []).map((a) => a.siteId))];
  const chance = useQueries({
    queries: scopes.map((siteId) => ({
      ...balanceArmsQueryOptions(study.id, siteId),
      refetchInterval: false as const,
      select: (v: { chance: ChanceInfo }) => v.chance,
    })),
  });
  const chanceFor = (siteId: string | null): ChanceInfo | undefined => chance[scopes.indexOf(siteId)]?.data;

  return (
    <div className="flex flex-col gap-5" data-testid="alerts-view">
      <h2 className="text-lg font-semibold text-ink">Balance alerts</h2>
      <StatisticianCaution />
      {randomized && (
        <Callout
          tone="caution"
          role="note"
          title="An alert shows the chance band; it does not change the analysis"
        >
          <p data-testid="alert-caution">
            {balanceCautions.randomizedImbalance} Each alert below shows the 95% chance band for its group
            sizes and how many crossings chance alone would give across all covariates.
          </p>
        </Callout>
      )}
      <fieldset className="flex flex-wrap items-center gap-2">
        <legend className="sr-only">Show alerts by state</legend>
        {filters.map((f) => (
          <Button
            key={f.id}
            size="sm"
            variant={filter === f.id ? 'primary' : 'secondary'}
            aria-pressed={filter === f.id}
            onClick={() => setFilter(f.id)}
          >
            {f.label}
          </Button>
        ))}
      </fieldset>
      {alerts.isPending ? (
        <LoadingState label="Loading alerts…" />
      ) : alerts.isError ? (
        <ErrorState error={alerts.error} onRetry={() => void alerts.refetch()} />
      ) : alerts.data.alerts.length === 0 ? (
        <EmptyState title={filter === 'all' ? 'No alerts' : `No ${filter} alerts`}>
          Alerts open when a rule starts to hold after a recompute: |SMD| over the threshold, a variance ratio
          outside its range, or an SMD beyond the chance band.
        </EmptyState>
      ) : (
        <ul className="flex flex-col gap-4" aria-label="Alerts">
          {alerts.data.alerts.map((alert) => (
            <li key={alert.id}>
              <AlertCard studyId={study.id} alert={alert} chance={chanceFor(alert.siteId)} />
            </li>
          ))}
        </ul>
      )}
    </div>
  );
}

function Figure({ label, children }: { label: string; children: ReactNode }) {
  return (
    <div className="flex flex-col gap-0.5">
      <dt className="text-xs font-semibold tracking-wide text-graphite uppercase">{label}</dt>
      <dd className="figure text-ink">{children}</dd>
    </div>
  );
}

function AlertCard({
  studyId,
  alert,
  chance,
}: {
  studyId: string;
  alert: Alert;
  chance: ChanceInfo | undefined;
}) {
  const [acknowledging, setAcknowledging] = useState(false);
  const beyond =
    alert.lastSmd !== null && alert.lastHalfWidth !== null && Math.abs(alert.lastSmd) > alert.lastHalfWidth;
  return (
    <Card data-testid="alert-card" data-state={alert.state}>
      <CardBody className="flex flex-col gap-4">
        <div className="flex flex-wrap items-start justify-between gap-3">
          <div>
            <h3 className="text-base font-semibold text-ink">
              {alert.covariateLabel}{' '}
              <span className="font-normal text-graphite">
                · {alert.siteCode ? `site ${alert.siteCode}` : 'all sites'}
              </span>
            </h3>
            <p className="text-sm text-graphite">
              {ruleLabel[alert.rule]}
              {alert.opening > 1 && ` · returned (opening ${alert.opening})`} · opened{' '}
              {formatDateTime(alert.openedAt)}
            </p>
          </div>
          <Badge tone={stateTone[alert.state]}>{alert.state}</Badge>
        </div>
        <dl className="grid grid-cols-2 gap-4 sm:grid-cols-5">
          <Figure label="SMD">{formatSmd(alert.lastSmd)}</Figure>
          <Figure label="95% chance band">{formatBand(alert.lastHalfWidth)}</Figure>
          <Figure label="Variance ratio">{formatNumber(alert.lastVarianceRatio)}</Figure>
          <Figure label="n (arm / reference)">
            {alert.lastNArm} / {alert.lastNReference}
          </Figure>
          <Figure label="Crossings by chance">
            {chance ? (
              <>
                ≈ {formatNumber(chance.expected, 1)}{' '}
                <span className="font-sans text-xs text-graphite">
                  of {chance.covariateCount} at |{chance.threshold}|
                </span>
              </>
            ) : (
              '—'
            )}
          </Figure>
        </dl>
        <p className="text-sm text-graphite">
          {beyond
            ? 'The SMD lies outside the band chance gives 95% of the time at these group sizes. In a randomized trial it is still chance: note it, and keep the pre-specified analysis.'
            : 'The SMD lies inside the band chance gives 95% of the time at these group sizes.'}{' '}
          Last evaluated {formatDateTime(alert.lastEvaluatedAt)}.
        </p>
        {alert.state === 'acknowledged' && (
          <div className="rounded-control border border-rule bg-paper/60 px-4 py-3 text-sm">
            <p className="font-semibold text-ink">
              Acknowledged by {alert.acknowledgedBy?.email ?? 'someone'} ·{' '}
              {formatDateTime(alert.acknowledgedAt)}
            </p>
            <p className="mt-1 whitespace-pre-wrap text-ink" data-testid="alert-comment">
              {alert.comment}
            </p>
          </div>
        )}
        {alert.state === 'cleared' && (
          <p className="text-sm text-moss">
            Cleared {formatDateTime(alert.clearedAt)}: the condition no longer holds.
          </p>
        )}
        {alert.state === 'open' &&
          (acknowledging ? (
            <AcknowledgeAlertForm studyId={studyId} alert={alert} onDone={() => setAcknowledging(false)} />
          ) : (
            <div>
              <Button variant="secondary" size="sm" onClick={() => setAcknowledging(true)}>
                Acknowledge with a comment
              </Button>
            </div>
          ))}
      </CardBody>
    </Card>
  );
}
