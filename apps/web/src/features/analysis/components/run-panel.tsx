import { useState } from 'react';
import type { SpecResponse } from '@counterpoise/contracts/analysis';
import { Badge } from '../../../components/ui/badge.js';
import { Button } from '../../../components/ui/button.js';
import { Card, CardBody, CardHeader } from '../../../components/ui/card.js';
import { TextareaField } from '../../../components/ui/field.js';
import { FormAlert } from '../../../components/ui/form-alert.js';
import { Table, TBody, TD, TH, THead, TR } from '../../../components/ui/table.js';
import { isApiError } from '../../../lib/api-client.js';
import { errorMessage } from '../../../lib/form-errors.js';
import { useCreateAnalysisRun } from '../api/create-analysis-run.js';
import { useAnalysisRuns } from '../api/get-analysis-runs.js';
import { num, pValue, utcTime } from './format.js';

type Props = {
  studyId: string;
  data: SpecResponse;
  selected: string | null;
  onSelect: (runId: string) => void;
};

/** Starts a run (a reason when it is exploratory) and lists earlier runs to open. */
export function RunPanel({ studyId, data, selected, onSelect }: Props) {
  const [reason, setReason] = useState('');
  const create = useCreateAnalysisRun(studyId);
  const runs = useAnalysisRuns(studyId);
  const current = data.current;
  const exploratory = data.nextRunExploratory;
  const reasonIssue = isApiError(create.error, 'validation_failed')
    ? create.error.fieldIssues().find((i) => i.path[0] === 'reason')?.message
    : undefined;

  return (
    <Card data-testid="run-panel">
      <CardHeader
        title="Run the analysis"
        description={
          current
            ? `Version ${current.version} (${current.status}) on the outcomes recorded now.`
            : 'Save a specification first.'
        }
        actions={
          current && (
            <Badge tone={exploratory ? 'ochre' : 'moss'}>
              {exploratory ? 'Next run: exploratory' : 'Next run: primary'}
            </Badge>
          )
        }
      />
      <CardBody>
        <form
          className="flex flex-col gap-4"
          onSubmit={(e) => {
            e.preventDefault();
            create.mutate(reason.trim() ? { reason: reason.trim() } : {}, {
              onSuccess: (run) => {
                setReason('');
                onSelect(run.id);
              },
            });
          }}
        >
          {exploratory && current && (
            <TextareaField
              label="Reason for this exploratory run"
              hint={
                data.firstLockedVersion === null
                  ? 'The specification is not locked yet, so a run now is exploratory (caution 3).'
                  : `Version ${data.firstLockedVersion} is the locked, pre-specified analysis; this version differs (caution 3).`
              }
              value={reason}
              error={reasonIssue}
              onChange={(e) => setReason(e.currentTarget.value)}
              required
            />
          )}
          <FormAlert message={create.isError && !reasonIssue ? errorMessage(create.error) : null} />
          <div>
            <Button
              type="submit"
              disabled={!current || (exploratory && reason.trim().length < 3)}
              busy={create.isPending}
            >
              {exploratory ? 'Run as exploratory' : 'Run the pre-specified analysis'}
            </Button>
          </div>
        </form>
        {runs.data && runs.data.runs.length > 0 && (
          <div className="mt-5">
            <h3 className="mb-2 text-sm font-semibold text-ink">Earlier runs</h3>
            <Table>
              <THead>
                <TR>
                  <TH>When (UTC)</TH>
                  <TH>Version</TH>
                  <TH>Kind</TH>
                  <TH className="text-right">n</TH>
                  <TH className="text-right">Arm F</TH>
                  <TH className="text-right">p</TH>
                  <TH>
                    <span className="sr-only">Open</span>
                  </TH>
                </TR>
              </THead>
              <TBody>
                {runs.data.runs.map((r) => (
                  <TR
                    key={r.id}
                    aria-current={r.id === selected ? 'true' : undefined}
                    className={r.id === selected ? 'bg-spruce-wash/40' : undefined}
                  >
                    <TD className="figure">{utcTime(r.runAt)}</TD>
                    <TD className="figure">{r.specVersion}</TD>
                    <TD>
                      {r.exploratory ? (
                        <Badge tone="ochre">exploratory</Badge>
                      ) : (
                        <Badge tone="moss">primary</Badge>
                      )}
                    </TD>
                    <TD className="figure text-right">{r.analysed}</TD>
                    <TD className="figure text-right">{num(r.groupF)}</TD>
                    <TD className="figure text-right">{pValue(r.groupP)}</TD>
                    <TD>
                      <Button
                        variant="quiet"
                        size="sm"
                        onClick={() => onSelect(r.id)}
                        aria-label={`Open the run of ${utcTime(r.runAt)}`}
                      >
                        Open
                      </Button>
                    </TD>
                  </TR>
                ))}
              </TBody>
            </Table>
          </div>
        )}
      </CardBody>
    </Card>
  );
}
