import { useState } from 'react';
import { useQueries } from '@tanstack/react-query';
import { balanceCautions, type Alert } from '@counterpoise/contracts/balance';
import type { StudySummary } from '@counterpoise/contracts/studies';
import { Button } from '../../../components/ui/button.js';
import { Callout } from '../../../components/ui/callout.js';
import { CheckboxField } from '../../../components/ui/field.js';
import { EmptyState, ErrorState, LoadingState } from '../../../components/ui/states.js';
import { StatisticianCaution } from '../../../components/ui/statistician-caution.js';
import { useAlerts } from '../api/get-alerts.js';
import { balanceArmsQueryOptions } from '../api/get-balance.js';
import { AlertsTable, type ChanceInfo } from './alerts-table.js';

type Filter = Alert['state'] | 'all';

const filters: Array<{ id: Filter; label: string }> = [
  { id: 'open', label: 'Open' },
  { id: 'acknowledged', label: 'Acknowledged' },
  { id: 'cleared', label: 'Cleared' },
  { id: 'all', label: 'All' },
];

/** The statistician's alert list, with the chance context each alert needs to be read correctly. */
export function AlertsView({ study }: { study: StudySummary }) {
  const [filter, setFilter] = useState<Filter>('open');
  const [done, setDone] = useState<Alert | null>(null);
  const [beyondOnly, setBeyondOnly] = useState(false);
  // One list for every state, filtered here, so the filter buttons can show their counts.
  const alerts = useAlerts(study.id, 'all');
  const randomized = study.kind === 'randomized_trial';
  const all = alerts.data?.alerts ?? [];

  // "How many crossings would chance give" depends on the scope's group sizes: overall or the site's.
  const scopes = [...new Set(all.map((a) => a.siteId))];
  const chance = useQueries({
    queries: scopes.map((siteId) => ({
      ...balanceArmsQueryOptions(study.id, siteId),
      refetchInterval: false as const,
      select: (v: { chance: ChanceInfo }) => v.chance,
    })),
  });
  const chanceFor = (siteId: string | null): ChanceInfo | undefined => chance[scopes.indexOf(siteId)]?.data;

  const shown = all.filter(
    (a) => (filter === 'all' || a.state === filter) && (!beyondOnly || a.rule === 'smd_beyond_chance'),
  );
  const count = (f: Filter) => (f === 'all' ? all.length : all.filter((a) => a.state === f).length);
  const openBeyond = all.filter((a) => a.state === 'open' && a.rule === 'smd_beyond_chance').length;

  return (
    <div className="flex flex-col gap-5" data-testid="alerts-view">
      <h2 className="text-lg font-semibold text-ink">Balance alerts</h2>
      <StatisticianCaution />
      {randomized ? (
        <Callout
          tone="caution"
          role="note"
          title="An alert shows the chance band; it does not change the analysis"
        >
          <p data-testid="alert-caution">
            {balanceCautions.randomizedImbalance} Each alert shows the 95% chance band for its group sizes and
            how many crossings chance alone would give across all covariates at those sizes.
          </p>
        </Callout>
      ) : (
        <Callout tone="caution" role="note" title="Imbalance in a cohort">
          <p data-testid="alert-caution">{balanceCautions.weighting}</p>
        </Callout>
      )}
      {alerts.data && (
        <p className="text-sm text-graphite">
          <span className="figure text-ink">{count('open')}</span> open, of which{' '}
          <span className="figure text-ink">{openBeyond}</span> beyond the chance band. Small sites cross the
          |SMD| threshold often by chance alone; compare each with its “crossings by chance”.
        </p>
      )}
      <div role="group" aria-label="Show alerts by state" className="flex flex-wrap items-center gap-2">
        {filters.map((f) => (
          <Button
            key={f.id}
            size="sm"
            variant={filter === f.id ? 'primary' : 'secondary'}
            aria-pressed={filter === f.id}
            onClick={() => setFilter(f.id)}
          >
            {f.label}
            <span className="figure text-xs opacity-80">{alerts.data ? count(f.id) : ''}</span>
          </Button>
        ))}
      </div>
      <CheckboxField
        label="Only alerts beyond the chance band"
        hint="Hides threshold and variance-ratio alerts that chance alone would often produce at these group sizes."
        checked={beyondOnly}
        onChange={(e) => setBeyondOnly(e.currentTarget.checked)}
      />
      <div aria-live="polite">
        {done && (
          <Callout tone="success" role="status">
            Acknowledged: {done.covariateLabel}
            {done.siteCode ? ` at ${done.siteCode}` : ' (all sites)'}. The comment is in the audit trail.
          </Callout>
        )}
      </div>
      {alerts.isPending ? (
        <LoadingState label="Loading alerts…" />
      ) : alerts.isError ? (
        <ErrorState error={alerts.error} onRetry={() => void alerts.refetch()} />
      ) : shown.length === 0 ? (
        <EmptyState title={filter === 'all' ? 'No alerts' : `No ${filter} alerts`}>
          Alerts open when a rule starts to hold after a recompute: |SMD| over the threshold, a variance ratio
          outside its range, or an SMD beyond the chance band.
        </EmptyState>
      ) : (
        <AlertsTable studyId={study.id} alerts={shown} chanceFor={chanceFor} onAcknowledged={setDone} />
      )}
    </div>
  );
}
