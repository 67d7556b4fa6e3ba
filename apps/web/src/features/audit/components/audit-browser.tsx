import { useState } from 'react';
import { buttonClass, Button } from '../../../components/ui/button.js';
import { Card, CardBody, CardHeader } from '../../../components/ui/card.js';
import { EmptyState, ErrorState, LoadingState, Spinner } from '../../../components/ui/states.js';
import { auditExportHref } from '../api/export-audit-csv.js';
import { useAuditEvents, type AuditFilters } from '../api/get-audit-events.js';
import { AuditFiltersForm, type StudyOption } from './audit-filters.js';
import { AuditTable } from './audit-table.js';
import { VerifyPanel } from './verify-panel.js';

type AuditBrowserProps = { studies: StudyOption[]; fixedStudyId?: string | undefined };

export function AuditBrowser({ studies, fixedStudyId }: AuditBrowserProps) {
  const [filters, setFilters] = useState<AuditFilters>({ studyId: fixedStudyId, limit: 50 });
  // Cursor stack: each entry is the beforeSeq of a page; undefined is the newest page.
  const [cursors, setCursors] = useState<Array<number | undefined>>([undefined]);
  const beforeSeq = cursors[cursors.length - 1];
  const page = useAuditEvents({ ...filters, beforeSeq });
  const { limit: _limit, ...exportFilters } = filters;

  return (
    <div className="flex flex-col gap-6">
      <Card>
        <CardHeader
          title="Integrity"
          description="The trail is append-only; each event is chained to the one before."
        />
        <CardBody>
          <VerifyPanel />
        </CardBody>
      </Card>

      <Card>
        <CardHeader
          title="Filter events"
          actions={
            <a href={auditExportHref(exportFilters)} download className={buttonClass('secondary', 'sm')}>
              Export CSV
              <span className="sr-only"> of the events matching these filters</span>
            </a>
          }
        />
        <CardBody>
          <AuditFiltersForm
            studies={studies}
            fixedStudyId={fixedStudyId}
            onApply={(next) => {
              setFilters(next);
              setCursors([undefined]);
            }}
          />
        </CardBody>
      </Card>

      <section aria-labelledby="audit-events-heading" className="flex flex-col gap-3">
        <div className="flex flex-wrap items-center justify-between gap-3">
          <h2 id="audit-events-heading" className="flex items-center gap-2 text-lg font-semibold text-ink">
            Events
            {page.isFetching && !page.isPending && <Spinner className="size-4" />}
          </h2>
          <p className="text-sm text-graphite" aria-live="polite">
            {page.data && page.data.events.length > 0 && (
              <>
                Page <span className="figure">{cursors.length}</span>: events{' '}
                <span className="figure">#{page.data.events[0]?.seq}</span> to{' '}
                <span className="figure">#{page.data.events[page.data.events.length - 1]?.seq}</span>
              </>
            )}
          </p>
        </div>
        {page.isPending && <LoadingState label="Loading audit events…" />}
        {page.isError && <ErrorState error={page.error} onRetry={() => void page.refetch()} />}
        {page.data && page.data.events.length === 0 && (
          <EmptyState title="No events match">
            Widen the filters, or clear them to see the whole trail.
          </EmptyState>
        )}
        {page.data && page.data.events.length > 0 && <AuditTable events={page.data.events} />}
        {page.data && (
          <nav aria-label="Audit pages" className="flex gap-2">
            <Button
              variant="secondary"
              size="sm"
              disabled={cursors.length <= 1}
              onClick={() => setCursors((c) => c.slice(0, -1))}
            >
              ← Newer
            </Button>
            <Button
              variant="secondary"
              size="sm"
              disabled={page.data.nextBeforeSeq === null || page.isPlaceholderData}
              onClick={() => {
                const next = page.data.nextBeforeSeq;
                if (next !== null) setCursors((c) => [...c, next]);
              }}
            >
              Older →
            </Button>
          </nav>
        )}
      </section>
    </div>
  );
}
