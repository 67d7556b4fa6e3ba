import { Fragment, useMemo, useState } from 'react';
import { createColumnHelper, flexRender, getCoreRowModel, useReactTable } from '@tanstack/react-table';
import type { AuditEventDto } from '@counterpoise/contracts/audit';
import { Table, TBody, TD, TH, THead, TR } from '../../../components/ui/table.js';

const column = createColumnHelper<AuditEventDto>();

function utc(iso: string): string {
  const d = new Date(iso);
  return Number.isNaN(d.getTime())
    ? iso
    : d
        .toISOString()
        .replace('T', ' ')
        .replace(/\.\d{3}Z$/, 'Z');
}

function Json({ value }: { value: unknown }) {
  if (value === null || value === undefined) return <p className="text-sm text-graphite">none</p>;
  return (
    <pre className="max-h-64 overflow-auto rounded-control border border-rule bg-vellum p-3 text-xs leading-relaxed text-ink">
      {JSON.stringify(value, null, 2)}
    </pre>
  );
}

export function AuditTable({ events }: { events: AuditEventDto[] }) {
  const [open, setOpen] = useState<Set<string>>(() => new Set());
  const toggle = (id: string) =>
    setOpen((prev) => {
      const next = new Set(prev);
      if (next.has(id)) next.delete(id);
      else next.add(id);
      return next;
    });

  const columns = useMemo(
    () => [
      column.accessor('seq', {
        header: 'Seq',
        cell: (c) => <span className="figure text-graphite">{c.getValue()}</span>,
      }),
      column.accessor('occurredAt', {
        header: 'When (UTC)',
        cell: (c) => <span className="figure text-xs whitespace-nowrap">{utc(c.getValue())}</span>,
      }),
      column.display({
        id: 'actor',
        header: 'Who',
        cell: ({ row: { original: e } }) => (
          <div className="min-w-40">
            <div className="break-all">{e.actorEmail ?? <span className="text-graphite">system</span>}</div>
            {e.actorRole && <div className="text-xs text-graphite">{e.actorRole}</div>}
          </div>
        ),
      }),
      column.accessor('action', {
        header: 'What',
        cell: (c) => <code className="text-xs font-medium text-spruce-deep">{c.getValue()}</code>,
      }),
      column.display({
        id: 'entity',
        header: 'Record',
        cell: ({ row: { original: e } }) => (
          <div>
            <div>{e.entityType}</div>
            {e.entityId && (
              <div className="figure max-w-44 truncate text-xs text-graphite" title={e.entityId}>
                {e.entityId}
              </div>
            )}
          </div>
        ),
      }),
      column.accessor('reason', {
        header: 'Why',
        cell: (c) => c.getValue() ?? <span className="text-graphite">—</span>,
      }),
      column.display({
        id: 'details',
        header: () => <span className="sr-only">Details</span>,
        cell: ({ row: { original: e } }) => (
          <button
            type="button"
            onClick={() => toggle(e.id)}
            aria-expanded={open.has(e.id)}
            aria-controls={`audit-detail-${e.id}`}
            className="rounded-control px-2 py-1 text-sm font-semibold whitespace-nowrap text-spruce hover:bg-spruce-wash"
          >
            {open.has(e.id) ? 'Hide' : 'Values'}
            <span className="sr-only"> of event {e.seq}</span>
          </button>
        ),
      }),
    ],
    [open],
  );

  const table = useReactTable({
    data: events,
    columns,
    getCoreRowModel: getCoreRowModel(),
    getRowId: (e) => e.id,
  });

  return (
    <Table>
      <caption className="sr-only">Audit events, newest first</caption>
      <THead>
        {table.getHeaderGroups().map((group) => (
          <TR key={group.id}>
            {group.headers.map((h) => (
              <TH key={h.id}>
                {h.isPlaceholder ? null : flexRender(h.column.columnDef.header, h.getContext())}
              </TH>
            ))}
          </TR>
        ))}
      </THead>
      <TBody>
        {table.getRowModel().rows.map((row) => (
          <Fragment key={row.id}>
            <TR>
              {row.getVisibleCells().map((cell) => (
                <TD key={cell.id}>{flexRender(cell.column.columnDef.cell, cell.getContext())}</TD>
              ))}
            </TR>
            {open.has(row.original.id) && (
              <tr id={`audit-detail-${row.original.id}`} className="bg-paper/70">
                <td colSpan={row.getVisibleCells().length} className="px-4 py-4">
                  <div className="grid gap-4 md:grid-cols-2">
                    <div>
                      <p className="mb-1 text-xs font-semibold tracking-wide text-graphite uppercase">
                        Before
                      </p>
                      <Json value={row.original.before} />
                    </div>
                    <div>
                      <p className="mb-1 text-xs font-semibold tracking-wide text-graphite uppercase">
                        After
                      </p>
                      <Json value={row.original.after} />
                    </div>
                  </div>
                  <dl className="mt-3 grid grid-cols-[auto_1fr] gap-x-3 gap-y-1 text-xs">
                    <dt className="text-graphite">Request</dt>
                    <dd className="figure break-all">{row.original.requestId ?? '—'}</dd>
                    <dt className="text-graphite">Hash</dt>
                    <dd className="figure break-all">{row.original.hash}</dd>
                    <dt className="text-graphite">Previous hash</dt>
                    <dd className="figure break-all">{row.original.prevHash}</dd>
                  </dl>
                </td>
              </tr>
            )}
          </Fragment>
        ))}
      </TBody>
    </Table>
  );
}
