import { Fragment, useMemo, useState } from 'react';
import {
  createColumnHelper,
  flexRender,
  getCoreRowModel,
  getSortedRowModel,
  useReactTable,
  type SortingState,
} from '@tanstack/react-table';
import type { Alert } from '@counterpoise/contracts/balance';
import { Badge, type BadgeTone } from '../../../components/ui/badge.js';
import { Table, TBody, TD, THead, TR } from '../../../components/ui/table.js';
import { AcknowledgeAlertForm } from './acknowledge-alert-form.js';
import { formatBand, formatDateTime, formatNumber, formatSmd } from './format.js';

export const ruleLabel: Record<Alert['rule'], string> = {
  smd_threshold: '|SMD| over the threshold',
  variance_ratio: 'Variance ratio outside the range',
  smd_beyond_chance: 'SMD beyond the 95% chance band',
};

const stateTone: Record<Alert['state'], BadgeTone> = {
  open: 'brick',
  acknowledged: 'harbor',
  cleared: 'moss',
};

export type ChanceInfo = { expected: number | null; covariateCount: number; threshold: number };

const column = createColumnHelper<Alert>();

function beyondBand(a: Alert): boolean {
  return a.lastSmd !== null && a.lastHalfWidth !== null && Math.abs(a.lastSmd) > a.lastHalfWidth;
}

/** Alerts as a sortable table; acknowledging opens a form in a row under the alert. */
export function AlertsTable({
  studyId,
  alerts,
  chanceFor,
  onAcknowledged,
}: {
  studyId: string;
  alerts: Alert[];
  chanceFor: (siteId: string | null) => ChanceInfo | undefined;
  onAcknowledged: (alert: Alert) => void;
}) {
  const [sorting, setSorting] = useState<SortingState>([{ id: 'absSmd', desc: true }]);
  const [formFor, setFormFor] = useState<string | null>(null);

  const columns = useMemo(
    () => [
      column.accessor('covariateLabel', {
        header: 'Covariate and rule',
        cell: ({ row: { original: a } }) => (
          <div className="min-w-44">
            <div className="font-semibold text-ink">{a.covariateLabel}</div>
            <div className="text-xs text-graphite">
              {ruleLabel[a.rule]}
              {a.opening > 1 && ` · returned (${a.opening}×)`}
            </div>
          </div>
        ),
      }),
      column.accessor((a) => a.siteCode ?? '', {
        id: 'site',
        header: 'Site',
        cell: ({ row: { original: a } }) =>
          a.siteCode ? (
            <span className="font-semibold">{a.siteCode}</span>
          ) : (
            <span className="text-graphite">all sites</span>
          ),
      }),
      column.accessor((a) => Math.abs(a.lastSmd ?? 0), {
        id: 'absSmd',
        header: 'SMD',
        cell: ({ row: { original: a } }) => (
          <span className={`figure whitespace-nowrap ${beyondBand(a) ? 'font-bold text-brick' : ''}`}>
            {beyondBand(a) && (
              <>
                <span aria-hidden="true">◆ </span>
                <span className="sr-only">beyond the chance band: </span>
              </>
            )}
            {formatSmd(a.lastSmd)}
          </span>
        ),
      }),
      column.accessor('lastHalfWidth', {
        header: '95% chance band',
        enableSorting: false,
        cell: (c) => <span className="figure">{formatBand(c.getValue())}</span>,
      }),
      column.accessor('lastVarianceRatio', {
        header: 'Var. ratio',
        enableSorting: false,
        cell: (c) => <span className="figure">{formatNumber(c.getValue())}</span>,
      }),
      column.display({
        id: 'n',
        header: 'n arm / ref',
        cell: ({ row: { original: a } }) => (
          <span className="figure whitespace-nowrap">
            {a.lastNArm} / {a.lastNReference}
          </span>
        ),
      }),
      column.display({
        id: 'chance',
        header: 'Crossings by chance',
        cell: ({ row: { original: a } }) => {
          const c = chanceFor(a.siteId);
          if (!c || c.expected === null) return <span className="text-graphite">—</span>;
          return (
            <span className="whitespace-nowrap">
              <span className="figure">≈ {formatNumber(c.expected, 1)}</span>
              <span className="text-xs text-graphite">
                {' '}
                of {c.covariateCount} at |{c.threshold}|
              </span>
            </span>
          );
        },
      }),
      column.accessor('openedAt', {
        header: 'Opened (UTC)',
        cell: (c) => <span className="figure text-xs whitespace-nowrap">{formatDateTime(c.getValue())}</span>,
      }),
      column.accessor('state', {
        header: 'State',
        cell: (c) => <Badge tone={stateTone[c.getValue()]}>{c.getValue()}</Badge>,
      }),
      column.display({
        id: 'action',
        header: () => <span className="sr-only">Action</span>,
        cell: ({ row: { original: a } }) =>
          a.state === 'open' ? (
            <button
              type="button"
              aria-expanded={formFor === a.id}
              aria-controls={`ack-${a.id}`}
              onClick={() => setFormFor((cur) => (cur === a.id ? null : a.id))}
              className="rounded-control border border-pebble px-2.5 py-1 text-sm font-semibold whitespace-nowrap text-spruce-deep hover:bg-spruce-wash"
            >
              {formFor === a.id ? 'Cancel' : 'Acknowledge'}
              <span className="sr-only">
                {' '}
                the alert on {a.covariateLabel}
                {a.siteCode ? ` at ${a.siteCode}` : ''}
              </span>
            </button>
          ) : null,
      }),
    ],
    [chanceFor, formFor],
  );

  const table = useReactTable({
    data: alerts,
    columns,
    state: { sorting },
    onSortingChange: setSorting,
    getCoreRowModel: getCoreRowModel(),
    getSortedRowModel: getSortedRowModel(),
    getRowId: (a) => a.id,
  });
  const width = table.getVisibleLeafColumns().length;

  return (
    <Table data-testid="alerts-table">
      <caption className="sr-only">Balance alerts; sortable by the column headers that are buttons</caption>
      <THead>
        {table.getHeaderGroups().map((group) => (
          <TR key={group.id}>
            {group.headers.map((h) => {
              const sorted = h.column.getIsSorted();
              return (
                <th
                  key={h.id}
                  scope="col"
                  aria-sort={sorted === 'asc' ? 'ascending' : sorted === 'desc' ? 'descending' : undefined}
                  className="px-3 py-2.5 text-left text-xs font-semibold tracking-wide text-graphite uppercase"
                >
                  {h.column.getCanSort() ? (
                    <button
                      type="button"
                      onClick={h.column.getToggleSortingHandler()}
                      className="inline-flex items-center gap-1 uppercase hover:text-ink"
                    >
                      {flexRender(h.column.columnDef.header, h.getContext())}
                      <span aria-hidden="true">{sorted === 'asc' ? '▲' : sorted === 'desc' ? '▼' : '↕'}</span>
                    </button>
                  ) : (
                    flexRender(h.column.columnDef.header, h.getContext())
                  )}
                </th>
              );
            })}
          </TR>
        ))}
      </THead>
      <TBody>
        {table.getRowModel().rows.map((row) => {
          const a = row.original;
          return (
            <Fragment key={row.id}>
              <TR data-testid="alert-row" data-state={a.state} data-alert-id={a.id}>
                {row.getVisibleCells().map((cell) => (
                  <TD key={cell.id} className="px-3 py-2.5">
                    {flexRender(cell.column.columnDef.cell, cell.getContext())}
                  </TD>
                ))}
              </TR>
              {a.state === 'acknowledged' && a.comment && (
                <TR className="bg-paper/50" data-testid="alert-comment-row" data-alert-id={a.id}>
                  <TD colSpan={width} className="px-3 py-2 text-sm">
                    <span className="font-semibold text-ink">
                      Acknowledged by {a.acknowledgedBy?.email ?? 'someone'}
                    </span>{' '}
                    <span className="figure text-xs text-graphite">{formatDateTime(a.acknowledgedAt)}</span>
                    <p className="mt-0.5 whitespace-pre-wrap text-ink" data-testid="alert-comment">
                      {a.comment}
                    </p>
                  </TD>
                </TR>
              )}
              {a.state === 'open' && formFor === a.id && (
                <TR id={`ack-${a.id}`} className="bg-spruce-wash/40">
                  <TD colSpan={width} className="px-3 py-3">
                    <div className="max-w-2xl">
                      <p className="mb-2 text-sm text-graphite">
                        {beyondBand(a)
                          ? 'The SMD lies outside the band chance gives 95% of the time at these group sizes. In a randomized trial it is still chance: note what you checked; the pre-specified analysis stands.'
                          : 'The SMD lies inside the band chance gives 95% of the time at these group sizes.'}
                      </p>
                      <AcknowledgeAlertForm
                        studyId={studyId}
                        alert={a}
                        onDone={() => {
                          setFormFor(null);
                          onAcknowledged(a);
                        }}
                      />
                    </div>
                  </TD>
                </TR>
              )}
            </Fragment>
          );
        })}
      </TBody>
    </Table>
  );
}
