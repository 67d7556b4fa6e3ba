import { Link } from 'react-router-dom';
import type { StudySummary } from '@counterpoise/contracts/studies';
import { paths } from '../../../config/paths.js';
import { ButtonLink } from '../../../components/ui/button.js';
import { EmptyState, ErrorState, LoadingState } from '../../../components/ui/states.js';
import { ProgressMeter } from '../../../components/ui/progress-meter.js';
import { Table, TBody, TD, TH, THead, TR } from '../../../components/ui/table.js';
import { useStudies } from '../api/get-studies.js';
import { BlindingBadge, describeRole, KindBadge, StatusBadge } from './study-labels.js';

/** `mayCreate`: the user may create studies (lib/authorization canCreateStudy), so the empty state offers it. */
export function StudyList({ mayCreate = false }: { mayCreate?: boolean }) {
  const studies = useStudies();

  if (studies.isPending) return <LoadingState label="Loading your studies…" />;
  if (studies.isError) return <ErrorState error={studies.error} onRetry={() => void studies.refetch()} />;
  if (studies.data.length === 0) {
    return mayCreate ? (
      <EmptyState
        title="No studies yet"
        action={
          <ButtonLink to={paths.studies.create.href()} variant="primary">
            New study
          </ButtonLink>
        }
      >
        Create the first study: give it a code, a title and its kind, then set up arms, sites, covariates and
        allocation on its Design tab.
      </EmptyState>
    ) : (
      <EmptyState title="No studies yet">
        You are not a member of any study. An administrator adds you to a study with a role; it then appears
        here.
      </EmptyState>
    );
  }
  return (
    <>
      <div className="hidden sm:block">
        <StudyTable studies={studies.data} />
      </div>
      <StudyCards studies={studies.data} />
    </>
  );
}

/** Narrow screens: one card per study instead of a table that would scroll sideways. */
function StudyCards({ studies }: { studies: StudySummary[] }) {
  return (
    <ul className="flex flex-col gap-3 sm:hidden" aria-label="Studies">
      {studies.map((study) => (
        <li key={study.id}>
          <Link
            to={paths.studies.study.href(study.id)}
            className="flex flex-col gap-3 rounded-card border border-rule bg-vellum p-4 shadow-card hover:border-pebble"
          >
            <span className="flex flex-col gap-0.5">
              <span className="figure text-xs font-medium text-clay">{study.code}</span>
              <span className="font-semibold text-ink">{study.title}</span>
            </span>
            <span className="flex flex-wrap gap-1.5">
              <KindBadge kind={study.kind} />
              <BlindingBadge blinding={study.blinding} />
              <StatusBadge status={study.status} />
            </span>
            <ProgressMeter
              value={study.enrolled}
              max={study.targetSampleSize}
              label={`Enrollment of ${study.code}`}
            />
            <span className="text-sm text-graphite">
              <span className="figure">{study.siteCount}</span> sites · {describeRole(study.myRole)}
            </span>
          </Link>
        </li>
      ))}
    </ul>
  );
}

function StudyTable({ studies }: { studies: StudySummary[] }) {
  return (
    <Table>
      <caption className="sr-only">Studies you can open, with enrollment against target</caption>
      <THead>
        <TR>
          <TH>Study</TH>
          <TH>Design</TH>
          <TH>Status</TH>
          <TH>Enrolled / target</TH>
          <TH className="text-right">Sites</TH>
          <TH>Your role</TH>
        </TR>
      </THead>
      <TBody>
        {studies.map((study) => (
          <TR key={study.id} className="hover:bg-paper/60">
            <TD className="max-w-md">
              <Link
                to={paths.studies.study.href(study.id)}
                className="group flex flex-col gap-0.5 no-underline"
              >
                <span className="figure text-xs font-medium text-clay">{study.code}</span>
                <span className="font-semibold text-ink group-hover:text-spruce group-hover:underline group-hover:underline-offset-4">
                  {study.title}
                </span>
              </Link>
            </TD>
            <TD>
              <div className="flex flex-wrap gap-1.5">
                <KindBadge kind={study.kind} />
                <BlindingBadge blinding={study.blinding} />
              </div>
            </TD>
            <TD>
              <StatusBadge status={study.status} />
            </TD>
            <TD>
              <ProgressMeter
                value={study.enrolled}
                max={study.targetSampleSize}
                label={`Enrollment of ${study.code}`}
              />
            </TD>
            <TD className="figure text-right">{study.siteCount}</TD>
            <TD className="text-graphite">{describeRole(study.myRole)}</TD>
          </TR>
        ))}
      </TBody>
    </Table>
  );
}
