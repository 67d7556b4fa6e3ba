import { useEffect, useState } from 'react';
import type { StudySummary } from '@counterpoise/contracts/studies';
import { Button } from '../../../components/ui/button.js';
import { Callout } from '../../../components/ui/callout.js';
import { Card, CardBody, CardHeader } from '../../../components/ui/card.js';
import { ErrorState, LoadingState } from '../../../components/ui/states.js';
import { StatisticianCaution } from '../../../components/ui/statistician-caution.js';
import { useAnalysisRun, useAnalysisRuns } from '../api/get-analysis-runs.js';
import { useAnalysisSpec } from '../api/get-analysis-spec.js';
import { CautionsPanel } from './cautions-panel.js';
import { CompletenessCard } from './completeness-card.js';
import { utcTime } from './format.js';
import { LockDialog } from './lock-dialog.js';
import { RunPanel } from './run-panel.js';
import { RunResults } from './run-results.js';
import { SpecEditor } from './spec-editor.js';

/** The Analysis tab: specify, sign and lock, check completeness, run, and read the results. */
export function AnalysisWorkspace({ study }: { study: StudySummary }) {
  const spec = useAnalysisSpec(study.id);
  const runs = useAnalysisRuns(study.id);
  const [selected, setSelected] = useState<string | null>(null);
  const [lockOpen, setLockOpen] = useState(false);
  useEffect(() => {
    if (selected === null && runs.data?.runs[0]) setSelected(runs.data.runs[0].id);
  }, [runs.data, selected]);
  const run = useAnalysisRun(study.id, selected);

  if (spec.isPending) return <LoadingState label="Loading the analysis specification…" />;
  if (spec.isError) return <ErrorState error={spec.error} onRetry={() => void spec.refetch()} />;
  const data = spec.data;
  const current = data.current;

  return (
    <div className="flex flex-col gap-5" data-testid="analysis-workspace">
      <h2 className="text-lg font-semibold text-ink">Analysis</h2>
      <StatisticianCaution />
      <div className="grid gap-5 xl:grid-cols-[minmax(0,3fr)_minmax(0,2fr)]">
        <SpecEditor studyId={study.id} data={data} />
        <div className="flex flex-col gap-5">
          <Card data-testid="signature-card">
            <CardHeader
              title="Signature"
              description="Locking signs the version electronically (21 CFR 11.50, 11.200)."
            />
            <CardBody className="flex flex-col gap-3 text-sm">
              {data.versions
                .filter((v) => v.signature)
                .map((v) => (
                  <div
                    key={v.version}
                    className="rounded-control border border-moss/30 bg-moss-wash px-3 py-2 text-ink"
                    data-testid="signature"
                  >
                    <p className="font-semibold">Version {v.version} locked</p>
                    <p>
                      Signed by <span className="font-semibold">{v.signature!.signerName}</span> (
                      {v.signature!.signerEmail}) at{' '}
                      <span className="figure">{utcTime(v.signature!.signedAt)}</span>
                    </p>
                    <p>Meaning: &ldquo;{v.signature!.meaning}&rdquo;</p>
                    <p className="figure text-xs break-all text-graphite">
                      SHA-256 {v.signature!.contentSha256}
                    </p>
                  </div>
                ))}
              {current && current.status === 'draft' && (
                <>
                  <p className="text-graphite">
                    Version {current.version} is a draft. Lock it before the comparison of arms is looked at;
                    later changes make new versions, and their runs exploratory.
                  </p>
                  <div>
                    <Button onClick={() => setLockOpen(true)}>Sign and lock version {current.version}</Button>
                  </div>
                  <LockDialog
                    studyId={study.id}
                    spec={current}
                    open={lockOpen}
                    onClose={() => setLockOpen(false)}
                  />
                </>
              )}
              {!current && <p className="text-graphite">Save a specification to lock it.</p>}
            </CardBody>
          </Card>
          {data.completeness ? (
            <CompletenessCard completeness={data.completeness} label={current?.spec.outcome.label ?? ''} />
          ) : (
            <Callout tone="info">
              Outcome completeness appears once the specification names the outcome.
            </Callout>
          )}
        </div>
      </div>
      <CautionsPanel cautions={data.cautions} title="Cautions for this specification" />
      <RunPanel studyId={study.id} data={data} selected={selected} onSelect={setSelected} />
      {selected && run.isPending && <LoadingState label="Loading the run…" />}
      {run.isError && <ErrorState error={run.error} />}
      {run.data && <RunResults run={run.data} />}
    </div>
  );
}
