import { Card, CardBody, CardHeader } from '../../../components/ui/card.js';
import { EmptyState, ErrorState, ForbiddenState, LoadingState } from '../../../components/ui/states.js';
import { FileColumnsTable } from '../../../components/ui/csv-file-field.js';
import { paths } from '../../../config/paths.js';
import { CompletenessCard } from '../../../features/analysis/components/completeness-card.js';
import { useOutcomes } from '../../../features/outcomes/api/get-outcomes.js';
import { outcomeColumns, templateCsv } from '../../../features/outcomes/components/outcome-csv.js';
import { OutcomesIntro } from '../../../features/outcomes/components/outcomes-intro.js';
import { OutcomeUpload } from '../../../features/outcomes/components/outcome-upload.js';
import { SingleOutcomeForm } from '../../../features/outcomes/components/single-outcome-form.js';
import { useStudyContext } from './study-context.js';

/** Outcome entry for site staff (own sites) and the statistician: one value, or a CSV file. No arm anywhere. */
export function StudyOutcomesRoute() {
  const { tabs, study } = useStudyContext();
  if (!tabs.includes('outcomes') || !study.permissions.includes('outcome.write')) return <ForbiddenState />;
  return (
    <>
      <title>{`Outcomes · ${study.code} · Counterpoise`}</title>
      <div className="flex flex-col gap-5" data-testid="outcomes-page">
        <h2 className="text-lg font-semibold text-ink">Outcomes</h2>
        <OutcomesBody />
      </div>
    </>
  );
}

function OutcomesBody() {
  const { tabs, study } = useStudyContext();
  const overview = useOutcomes(study.id);
  if (overview.isPending) return <LoadingState label="Loading the outcome…" />;
  if (overview.isError) return <ErrorState error={overview.error} onRetry={() => void overview.refetch()} />;
  const { outcome, completeness, specVersion, specStatus } = overview.data;
  if (!outcome) {
    return (
      <EmptyState title="No outcome to record yet">
        The study’s statistician names the outcome, and its unit, in the analysis specification. Once a
        specification is saved, its outcome can be recorded here.
      </EmptyState>
    );
  }
  const siteScoped = completeness !== null && completeness.bySite.length < study.siteCount;
  return (
    <>
      <OutcomesIntro
        outcome={outcome}
        specVersion={specVersion}
        specStatus={specStatus}
        siteCodes={siteScoped ? completeness.bySite.map((s) => s.siteCode) : null}
        participantsHref={
          tabs.includes('participants') ? paths.studies.tab.href(study.id, 'participants') : null
        }
      />
      <div className="grid gap-5 xl:grid-cols-[minmax(0,7fr)_minmax(0,5fr)]">
        <div className="flex flex-col gap-5">
          <SingleOutcomeForm
            studyId={study.id}
            outcomeKey={outcome.key}
            label={outcome.label}
            unit={outcome.unit}
          />
          <OutcomeUpload studyId={study.id} outcomeKey={outcome.key} unit={outcome.unit} />
        </div>
        <div className="flex flex-col gap-5">
          {completeness && <CompletenessCard completeness={completeness} label={outcome.label} />}
          <Card>
            <CardHeader
              title="File columns"
              description="Column names are not case-sensitive; other columns are refused."
              actions={
                <a
                  href={`data:text/csv;charset=utf-8,${encodeURIComponent(templateCsv())}`}
                  download={`${study.code}-outcomes-template.csv`}
                  className="text-sm font-semibold text-spruce underline underline-offset-4"
                >
                  Download a header template
                </a>
              }
            />
            <CardBody className="flex flex-col gap-3">
              <FileColumnsTable
                label="Outcome file columns"
                columns={outcomeColumns.map((c) => ({
                  name: c.name,
                  meaning: c.name === 'value' && outcome.unit ? `${c.meaning}, in ${outcome.unit}` : c.meaning,
                }))}
              />
              <p className="text-sm text-graphite">
                Separate the columns with commas or semicolons and save the file as UTF-8. In a
                semicolon-separated file a decimal comma (412,5) is read as a decimal. Each participant
                appears once per file. The file is sent in parts of at most 5,000 rows.
              </p>
            </CardBody>
          </Card>
        </div>
      </div>
    </>
  );
}
