import type { BalancePooledView, CovariateSummary } from '@counterpoise/contracts/balance';
import type { StudySummary } from '@counterpoise/contracts/studies';
import { Callout } from '../../../components/ui/callout.js';
import { Card, CardBody, CardHeader } from '../../../components/ui/card.js';
import { ErrorState, LoadingState } from '../../../components/ui/states.js';
import { StatisticianCaution } from '../../../components/ui/statistician-caution.js';
import { Table, TBody, TD, TH, THead, TR } from '../../../components/ui/table.js';
import { isApiError } from '../../../lib/api-client.js';
import { useBalancePooled } from '../api/get-balance.js';
import { formatDateTime, formatNumber, formatPercent } from './format.js';
import { EnrollmentBySiteChart } from './enrollment-by-site-chart.js';

/**
 * The blinded view: enrollment against target by site, data completeness and pooled baseline
 * distributions. Built only from the pooled endpoint, which carries no arm at all.
 */
export function PooledOverview({ study }: { study: StudySummary }) {
  const pooled = useBalancePooled(study.id);
  if (pooled.isPending) return <LoadingState label="Loading pooled figures…" />;
  if (pooled.isError) {
    if (isApiError(pooled.error, 'not_found')) {
      return <p className="text-sm text-graphite">Pooled figures appear after the first enrollment.</p>;
    }
    return <ErrorState error={pooled.error} onRetry={() => void pooled.refetch()} />;
  }
  return <PooledBody view={pooled.data} />;
}

function PooledBody({ view }: { view: BalancePooledView }) {
  return (
    <div className="flex flex-col gap-5" data-testid="pooled-overview">
      <div className="flex flex-wrap items-end justify-between gap-3">
        <h2 className="text-lg font-semibold text-ink">Pooled figures, all arms together</h2>
        <p className="text-sm text-graphite">
          Computed at <span className="figure text-ink">{formatDateTime(view.computedAt)}</span>
          {view.freshness.recomputePending && ' · recompute pending'}
        </p>
      </div>
      <StatisticianCaution />
      <div className="grid gap-5 xl:grid-cols-2">
        <Card>
          <CardHeader
            title="Enrollment by site"
            description={`${view.enrolled} of ${view.targetSampleSize} enrolled overall.`}
          />
          <CardBody>
            <EnrollmentBySiteChart sites={view.sites} />
          </CardBody>
        </Card>
        <Card>
          <CardHeader
            title="Data completeness by site"
            description="Share of the required baseline values present for the site's participants."
          />
          <CardBody className="p-0">
            <table className="w-full text-sm" data-testid="completeness-by-site">
              <caption className="sr-only">Data completeness by site</caption>
              <thead className="border-b border-rule bg-paper/70">
                <tr className="text-xs text-graphite uppercase">
                  <th scope="col" className="px-5 py-2 text-left">
                    Site
                  </th>
                  <th scope="col" className="px-3 py-2 text-right">
                    Enrolled
                  </th>
                  <th scope="col" className="px-5 py-2 text-left">
                    Completeness
                  </th>
                </tr>
              </thead>
              <tbody className="divide-y divide-rule">
                {view.sites.map((s) => (
                  <tr key={s.siteId}>
                    <th scope="row" className="px-5 py-2 text-left font-normal">
                      <span className="font-semibold text-ink">{s.code}</span>{' '}
                      <span className="text-graphite">{s.name}</span>
                    </th>
                    <td className="figure px-3 py-2 text-right">{s.enrolled}</td>
                    <td className="px-5 py-2">
                      <CompletenessBar value={s.completeness} />
                    </td>
                  </tr>
                ))}
              </tbody>
            </table>
          </CardBody>
        </Card>
      </div>
      <Card>
        <CardHeader
          title="Pooled baseline distributions"
          description="Every participant together; nothing here is broken down by arm."
        />
        <CardBody className="flex flex-col gap-3">
          <Table data-testid="pooled-distributions">
            <caption className="sr-only">Pooled baseline distributions</caption>
            <THead>
              <TR>
                <TH>Characteristic</TH>
                <TH>Distribution</TH>
                <TH className="text-right">n</TH>
                <TH className="text-right">Missing</TH>
                <TH className="text-right">Complete</TH>
              </TR>
            </THead>
            <TBody>
              {view.covariates.map((c) => (
                <TR key={c.key}>
                  <TD className="font-semibold">
                    {c.label}
                    {c.unit && <span className="font-normal text-graphite">, {c.unit}</span>}
                  </TD>
                  <TD>
                    <Distribution kind={c.kind} summary={c.pooled} />
                  </TD>
                  <TD className="figure text-right">{c.pooled.n}</TD>
                  <TD className="figure text-right">{c.pooled.missing}</TD>
                  <TD className="figure text-right">{formatPercent(c.completeness)}</TD>
                </TR>
              ))}
            </TBody>
          </Table>
          <Callout tone="info">
            Balance between arms is monitored by the unblinded statistician. Arm-level figures are not shown
            to blinded roles.
          </Callout>
        </CardBody>
      </Card>
    </div>
  );
}

function CompletenessBar({ value }: { value: number | null }) {
  if (value === null) return <span className="text-graphite">—</span>;
  return (
    <div className="flex items-center gap-2">
      <div
        role="meter"
        aria-label="Completeness"
        aria-valuemin={0}
        aria-valuemax={100}
        aria-valuenow={Math.round(value)}
        className="h-2 w-32 overflow-hidden rounded-full bg-rule"
      >
        <div className={value >= 95 ? 'h-full bg-moss' : 'h-full bg-ochre'} style={{ width: `${value}%` }} />
      </div>
      <span className="figure text-ink">{formatPercent(value, 1)}</span>
    </div>
  );
}

function Distribution({
  kind,
  summary,
}: {
  kind: 'continuous' | 'binary' | 'categorical';
  summary: CovariateSummary;
}) {
  if (kind === 'continuous') {
    return (
      <span className="figure text-ink">
        {formatNumber(summary.mean, 1)} ± {formatNumber(summary.sd, 1)}{' '}
        <span className="text-graphite">
          · median {formatNumber(summary.median, 1)} [{formatNumber(summary.q1, 1)}–
          {formatNumber(summary.q3, 1)}]
        </span>
      </span>
    );
  }
  const levels = summary.levels ?? [];
  return (
    <div className="flex flex-col gap-1">
      {levels.map((l) => (
        <div key={l.level} className="flex items-center gap-2 text-sm">
          <span className="w-28 truncate text-graphite">{levelName(kind, l.level)}</span>
          <span
            aria-hidden="true"
            className="inline-block h-2 rounded-full bg-harbor"
            style={{ width: `${Math.max(2, (l.percent ?? 0) * 1.2)}px` }}
          />
          <span className="figure text-ink">
            {l.n} ({formatPercent(l.percent, 1)})
          </span>
        </div>
      ))}
    </div>
  );
}

function levelName(kind: 'binary' | 'categorical', level: string): string {
  if (kind !== 'binary') return level;
  return level === '1' ? 'yes' : level === '0' ? 'no' : level;
}
