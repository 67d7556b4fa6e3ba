import { useEffect, useMemo, useState } from 'react';
import { useSearchParams } from 'react-router-dom';
import {
  createColumnHelper,
  flexRender,
  getCoreRowModel,
  useReactTable,
  type SortingState,
} from '@tanstack/react-table';
import {
  participantListQuerySchema,
  participantStatusSchema,
  type ParticipantSummary,
} from '@counterpoise/contracts/participants';
import { Button } from '../../../components/ui/button.js';
import { SelectField, TextField } from '../../../components/ui/field.js';
import { EmptyState, ErrorState, LoadingState, Spinner } from '../../../components/ui/states.js';
import { Table, TBody, TD, TH, THead, TR } from '../../../components/ui/table.js';
import { TextLink } from '../../../components/ui/text-link.js';
import { paths } from '../../../config/paths.js';
import { useParticipants, type ParticipantListParams } from '../api/get-participants.js';
import { participantStatusLabel, ParticipantStatusBadge, utcStamp } from './participant-labels.js';

type SiteOption = { id: string; code: string; name: string };

type ParticipantsTableProps = {
  studyId: string;
  sites: SiteOption[];
  /** Arms only where the API says this reader may see them. */
  showArms: boolean;
  /** True when the reader works at some sites only (coordinators). */
  siteScoped: boolean;
};

const column = createColumnHelper<ParticipantSummary>();
const sortable = new Set(['code', 'site', 'status', 'enrolledAt']);

/** The list's state lives in the URL so a filtered, sorted page can be bookmarked and shared. */
function useListParams(): [
  ParticipantListParams,
  (patch: Partial<Record<string, string | number | undefined>>) => void,
] {
  const [search, setSearch] = useSearchParams();
  const parsed = participantListQuerySchema.safeParse(Object.fromEntries(search));
  const params = parsed.success ? parsed.data : participantListQuerySchema.parse({});
  const update = (patch: Partial<Record<string, string | number | undefined>>) => {
    setSearch(
      (prev) => {
        const next = new URLSearchParams(prev);
        for (const [k, v] of Object.entries(patch)) {
          if (v === undefined || v === '') next.delete(k);
          else next.set(k, String(v));
        }
        // Any change other than the page itself goes back to the first page.
        if (!('page' in patch)) next.delete('page');
        return next;
      },
      { replace: true },
    );
  };
  return [params, update];
}

export function ParticipantsTable({ studyId, sites, showArms, siteScoped }: ParticipantsTableProps) {
  const [params, update] = useListParams();
  const list = useParticipants(studyId, params);
  const [searchText, setSearchText] = useState(params.q ?? '');

  // Search as the user types, after a short pause, so each keystroke is not a request.
  useEffect(() => {
    const handle = window.setTimeout(() => {
      if ((params.q ?? '') !== searchText.trim()) update({ q: searchText.trim() || undefined });
    }, 300);
    return () => window.clearTimeout(handle);
    // Only the typed text drives this effect; `params` and `update` change with it.
  }, [searchText]);

  const sorting: SortingState = useMemo(() => {
    const desc = params.sort.startsWith('-');
    return [{ id: desc ? params.sort.slice(1) : params.sort, desc }];
  }, [params.sort]);

  const columns = useMemo(
    () => [
      column.accessor('code', {
        header: 'Participant',
        cell: (c) => (
          <TextLink to={paths.participants.detail.href(studyId, c.row.original.id)} className="figure">
            {c.getValue()}
          </TextLink>
        ),
      }),
      column.accessor('siteCode', {
        id: 'site',
        header: 'Site',
        cell: (c) => <span className="figure">{c.getValue()}</span>,
      }),
      column.accessor('status', {
        header: 'Status',
        cell: (c) => <ParticipantStatusBadge status={c.getValue()} />,
      }),
      column.accessor('screenedAt', {
        header: 'Screened (UTC)',
        enableSorting: false,
        cell: (c) => <span className="figure text-xs whitespace-nowrap">{utcStamp(c.getValue())}</span>,
      }),
      column.accessor('enrolledAt', {
        header: 'Enrolled (UTC)',
        cell: (c) => <span className="figure text-xs whitespace-nowrap">{utcStamp(c.getValue())}</span>,
      }),
      column.accessor('kitCode', {
        header: 'Kit code',
        enableSorting: false,
        cell: (c) => <span className="figure">{c.getValue() ?? '—'}</span>,
      }),
      ...(showArms
        ? [
            column.accessor((p) => p.arm?.name ?? '', {
              id: 'arm',
              header: 'Arm',
              enableSorting: false,
              cell: (c) => c.getValue() || <span className="text-graphite">—</span>,
            }),
          ]
        : []),
    ],
    [studyId, showArms],
  );

  const total = list.data?.total ?? 0;
  const pageCount = Math.max(1, Math.ceil(total / params.pageSize));
  const table = useReactTable({
    data: list.data?.items ?? [],
    columns,
    getCoreRowModel: getCoreRowModel(),
    manualSorting: true,
    manualPagination: true,
    manualFiltering: true,
    pageCount,
    state: { sorting, pagination: { pageIndex: params.page - 1, pageSize: params.pageSize } },
    enableSortingRemoval: false,
    onSortingChange: (updater) => {
      const next = typeof updater === 'function' ? updater(sorting) : updater;
      const first = next[0];
      if (first && sortable.has(first.id)) update({ sort: `${first.desc ? '-' : ''}${first.id}` });
    },
  });

  const from = total === 0 ? 0 : (params.page - 1) * params.pageSize + 1;
  const to = Math.min(total, params.page * params.pageSize);
  const filtered = Boolean(params.q || params.siteId || params.status);

  return (
    <div className="flex flex-col gap-4">
      <div
        role="search"
        className="grid gap-3 sm:grid-cols-[1fr_12rem_12rem_8rem]"
        aria-label="Filter participants"
      >
        <TextField
          label="Search by code"
          type="search"
          value={searchText}
          onChange={(e) => setSearchText(e.target.value)}
          placeholder="e.g. KESTREL-ALB"
          autoComplete="off"
        />
        <SelectField
          label="Site"
          value={params.siteId ?? ''}
          onChange={(e) => update({ siteId: e.target.value || undefined })}
        >
          <option value="">{siteScoped ? 'All my sites' : 'All sites'}</option>
          {sites.map((s) => (
            <option key={s.id} value={s.id}>
              {s.code} · {s.name}
            </option>
          ))}
        </SelectField>
        <SelectField
          label="Status"
          value={params.status ?? ''}
          onChange={(e) => update({ status: e.target.value || undefined })}
        >
          <option value="">Any status</option>
          {participantStatusSchema.options.map((s) => (
            <option key={s} value={s}>
              {participantStatusLabel[s].text}
            </option>
          ))}
        </SelectField>
        <SelectField
          label="Per page"
          value={String(params.pageSize)}
          onChange={(e) => update({ pageSize: Number(e.target.value) })}
        >
          {[10, 25, 50, 100].map((n) => (
            <option key={n} value={n}>
              {n}
            </option>
          ))}
        </SelectField>
      </div>

      {list.isPending ? (
        <LoadingState label="Loading participants…" />
      ) : list.isError ? (
        <ErrorState error={list.error} onRetry={() => void list.refetch()} />
      ) : total === 0 ? (
        <EmptyState title={filtered ? 'No participant matches these filters' : 'No participants yet'}>
          {filtered
            ? 'Change the search or the filters above.'
            : 'Screened candidates and enrolled participants appear here.'}
        </EmptyState>
      ) : (
        <>
          <Table aria-label="Participants" aria-busy={list.isFetching || undefined}>
            <THead>
              {table.getHeaderGroups().map((group) => (
                <TR key={group.id}>
                  {group.headers.map((header) => {
                    const canSort = header.column.getCanSort() && sortable.has(header.column.id);
                    const dir = header.column.getIsSorted();
                    return (
                      <TH
                        key={header.id}
                        aria-sort={
                          dir === 'asc'
                            ? 'ascending'
                            : dir === 'desc'
                              ? 'descending'
                              : canSort
                                ? 'none'
                                : undefined
                        }
                      >
                        {canSort ? (
                          <button
                            type="button"
                            onClick={header.column.getToggleSortingHandler()}
                            className="inline-flex items-center gap-1 uppercase hover:text-ink"
                          >
                            {flexRender(header.column.columnDef.header, header.getContext())}
                            <span aria-hidden="true">{dir === 'asc' ? '▲' : dir === 'desc' ? '▼' : '↕'}</span>
                          </button>
                        ) : (
                          flexRender(header.column.columnDef.header, header.getContext())
                        )}
                      </TH>
                    );
                  })}
                </TR>
              ))}
            </THead>
            <TBody>
              {table.getRowModel().rows.map((row) => (
                <TR key={row.id}>
                  {row.getVisibleCells().map((cell) => (
                    <TD key={cell.id}>{flexRender(cell.column.columnDef.cell, cell.getContext())}</TD>
                  ))}
                </TR>
              ))}
            </TBody>
          </Table>
          <nav aria-label="Pages" className="flex flex-wrap items-center justify-between gap-3">
            <p className="text-sm text-graphite" aria-live="polite">
              {list.isFetching && <Spinner className="mr-2 size-3.5 align-middle" />}
              Showing <span className="figure">{from}</span>–<span className="figure">{to}</span> of{' '}
              <span className="figure">{total.toLocaleString('en')}</span>
            </p>
            <div className="flex items-center gap-2">
              <Button
                variant="secondary"
                size="sm"
                disabled={params.page <= 1}
                onClick={() => update({ page: params.page - 1 })}
              >
                Previous
              </Button>
              <span className="figure text-sm">
                Page {params.page} of {pageCount}
              </span>
              <Button
                variant="secondary"
                size="sm"
                disabled={params.page >= pageCount}
                onClick={() => update({ page: params.page + 1 })}
              >
                Next
              </Button>
            </div>
          </nav>
        </>
      )}
    </div>
  );
}
