import type { z } from 'zod';
import type { StudyDetail } from '../../../lib/study-detail.js';
import type { historyEntrySchema, ParticipantDetail } from '@counterpoise/contracts/participants';
import { Badge } from '../../../components/ui/badge.js';
import { Callout } from '../../../components/ui/callout.js';
import { Card, CardBody, CardHeader } from '../../../components/ui/card.js';
import { Table, TBody, TD, TH, THead, TR } from '../../../components/ui/table.js';
import { formatBytes } from '../../../lib/upload.js';
import { consentDocumentHref } from '../api/upload-consent.js';
import { formatBaselineValue } from './baseline-fields.js';
import { ConsentUpload } from './consent-upload.js';
import { CorrectionForm, WithdrawForm } from './correction-forms.js';
import { ParticipantStatusBadge, utcDate, utcStamp } from './participant-labels.js';
import { EmergencyUnblind } from './unblind-dialog.js';
import { Fact } from '../../../components/ui/fact.js';

type HistoryEntry = z.output<typeof historyEntrySchema>;


const actionLabels: Record<string, string> = {
  'participant.screened': 'Screened: eligible',
  'participant.screen_failed': 'Screened: not eligible',
  'participant.enrolled': 'Enrolled and allocated',
  'participant.imported': 'Imported from a file',
  'participant.corrected': 'Data corrected',
  'participant.withdrawn': 'Withdrawn',
  'participant.unblinded': 'Emergency unblinding',
  'consent.uploaded': 'Consent document stored',
  'consent.document_uploaded': 'Consent document stored',
};

function Changes({ before, after }: { before: unknown; after: unknown }) {
  if (before === null && after === null) return null;
  const show = (v: unknown) => (v === null || v === undefined ? '—' : JSON.stringify(v, null, 1));
  return (
    <details className="mt-1 text-xs">
      <summary className="cursor-pointer font-semibold text-spruce-deep">Old and new values</summary>
      <div className="mt-1 grid gap-2 sm:grid-cols-2">
        <div>
          <p className="font-semibold text-graphite">Before</p>
          <pre className="max-h-48 overflow-auto rounded-control border border-rule bg-paper/60 p-2 whitespace-pre-wrap">
            {show(before)}
          </pre>
        </div>
        <div>
          <p className="font-semibold text-graphite">After</p>
          <pre className="max-h-48 overflow-auto rounded-control border border-rule bg-paper/60 p-2 whitespace-pre-wrap">
            {show(after)}
          </pre>
        </div>
      </div>
    </details>
  );
}

function History({ entries }: { entries: HistoryEntry[] }) {
  if (entries.length === 0) return <p className="text-sm text-graphite">No entries you may see.</p>;
  return (
    <ol className="flex flex-col gap-3">
      {entries.map((h) => (
        <li key={h.seq} className="border-l-2 border-spruce/40 pl-3">
          <p className="text-sm font-semibold text-ink">
            {actionLabels[h.action] ?? h.action}{' '}
            <code className="ml-1 text-xs font-normal text-graphite">{h.action}</code>
          </p>
          <p className="text-xs text-graphite">
            <span className="figure">{utcStamp(h.occurredAt)}</span> · {h.actorEmail ?? 'system'}
            {h.actorRole ? ` (${h.actorRole})` : ''} · entry <span className="figure">#{h.seq}</span>
          </p>
          {h.reason && <p className="mt-0.5 text-sm">Reason: {h.reason}</p>}
          <Changes before={h.before} after={h.after} />
        </li>
      ))}
    </ol>
  );
}

type DetailProps = { study: StudyDetail; participant: ParticipantDetail };

/** One participant. What each role sees of the allocation is decided by the API; this shows what came. */
export function ParticipantDetailView({ study, participant: p }: DetailProps) {
  const canWrite = study.permissions.includes('participant.write');
  const canUnblind = study.permissions.includes('allocation.unblind');
  const covariates = new Map(study.covariates.map((c) => [c.key, c]));
  const active = p.status === 'enrolled';
  const allocated = p.allocation !== null;

  return (
    <div className="grid gap-5 lg:grid-cols-3">
      <div className="flex flex-col gap-5 lg:col-span-2">
        <Card>
          <CardHeader title="Participant" actions={<ParticipantStatusBadge status={p.status} />} />
          <CardBody>
            <dl className="grid gap-4 sm:grid-cols-3">
              <Fact label="Code">
                <span className="figure">{p.code}</span>
              </Fact>
              <Fact label="Site">
                <span className="figure">{p.siteCode}</span>
              </Fact>
              <Fact label="Screened (UTC)">
                <span className="figure text-sm">{utcStamp(p.screenedAt)}</span>
              </Fact>
              <Fact label="Enrolled (UTC)">
                <span className="figure text-sm">{utcStamp(p.enrolledAt)}</span>
              </Fact>
              {p.withdrawnAt && (
                <Fact label="Withdrawn (UTC)">
                  <span className="figure text-sm">{utcStamp(p.withdrawnAt)}</span>
                </Fact>
              )}
              {p.withdrawalReason && <Fact label="Withdrawal reason">{p.withdrawalReason}</Fact>}
            </dl>
            {p.status === 'withdrawn' && (
              <Callout tone="info" className="mt-4">
                Withdrawn: no further data can be entered. What was collected is kept.
              </Callout>
            )}
          </CardBody>
        </Card>

        <Card>
          <CardHeader
            title="Baseline values"
            description="Each value with the date it was measured. Corrections are audited with old and new values."
          />
          <CardBody className="flex flex-col gap-4">
            {Object.keys(p.baseline).length === 0 ? (
              <p className="text-sm text-graphite">No baseline values recorded.</p>
            ) : (
              <Table aria-label="Baseline values">
                <THead>
                  <TR>
                    <TH>Covariate</TH>
                    <TH>Value</TH>
                    <TH>Measured on</TH>
                  </TR>
                </THead>
                <TBody>
                  {study.covariates
                    .filter((c) => p.baseline[c.key])
                    .map((c) => {
                      const entry = p.baseline[c.key]!;
                      return (
                        <TR key={c.key}>
                          <TD>{c.label}</TD>
                          <TD className="figure">
                            {formatBaselineValue(covariates.get(c.key), entry.value)}
                          </TD>
                          <TD className="figure">{entry.measuredOn}</TD>
                        </TR>
                      );
                    })}
                </TBody>
              </Table>
            )}
            {canWrite && active && study.covariates.length > 0 && (
              <details className="rounded-card border border-rule p-4">
                <summary className="cursor-pointer font-semibold text-spruce-deep">
                  Correct a baseline value
                </summary>
                <div className="mt-4">
                  <CorrectionForm studyId={study.id} participant={p} covariates={study.covariates} />
                </div>
              </details>
            )}
          </CardBody>
        </Card>

        <Card>
          <CardHeader
            title="History"
            description="From the audit trail: who, when, why, old and new values (UTC)."
          />
          <CardBody>
            <History entries={p.history} />
          </CardBody>
        </Card>
      </div>

      <div className="flex flex-col gap-5">
        <Card>
          <CardHeader title="Allocation" />
          <CardBody className="flex flex-col gap-3">
            {!allocated ? (
              <p className="text-sm text-graphite">
                {p.status === 'screened' || p.status === 'screen_failed'
                  ? 'Not enrolled, so nothing is allocated.'
                  : study.kind === 'observational_cohort'
                    ? 'Observational cohort: the exposure group is recorded, not allocated.'
                    : 'No allocation recorded.'}
              </p>
            ) : (
              <dl className="grid gap-3">
                <Fact label="Kit code">
                  <span className="figure text-lg">{p.allocation!.kitCode}</span>
                </Fact>
                <Fact label="Allocated (UTC)">
                  <span className="figure text-sm">{utcStamp(p.allocation!.allocatedAt)}</span>
                </Fact>
                {p.allocation!.arm && (
                  <Fact label="Arm">
                    {p.allocation!.arm.name}{' '}
                    <span className="figure text-graphite">({p.allocation!.arm.code})</span>
                  </Fact>
                )}
              </dl>
            )}
            {!allocated && p.arm && (
              <Fact label="Exposure group">
                {p.arm.name} <span className="figure text-graphite">({p.arm.code})</span>
              </Fact>
            )}
            {allocated && !p.allocation!.arm && (
              <p className="text-sm text-graphite">
                Blinded study: the kit code identifies the treatment pack; the arm is not shown to your role.
              </p>
            )}
            {allocated && !p.allocation!.arm && canUnblind && (
              <EmergencyUnblind studyId={study.id} participantId={p.id} participantCode={p.code} />
            )}
          </CardBody>
        </Card>

        <Card>
          <CardHeader title="Consent" />
          <CardBody className="flex flex-col gap-4">
            <dl className="grid grid-cols-2 gap-3">
              <Fact label="Date">
                <span className="figure">{p.consentDate ? utcDate(p.consentDate) : '—'}</span>
              </Fact>
              <Fact label="Form version">{p.consentVersion ?? '—'}</Fact>
            </dl>
            {p.consentDocuments.length === 0 ? (
              <p className="text-sm text-graphite">No signed consent document stored.</p>
            ) : (
              <ul className="flex flex-col gap-2">
                {p.consentDocuments.map((d) => (
                  <li key={d.id} className="rounded-control border border-rule p-2 text-sm">
                    <a
                      href={consentDocumentHref(study.id, p.id, d.id)}
                      className="font-semibold break-all text-spruce underline underline-offset-4"
                      target="_blank"
                      rel="noreferrer"
                    >
                      {d.originalName}
                    </a>
                    <p className="text-xs text-graphite">
                      <Badge>{d.mediaType}</Badge> {formatBytes(d.sizeBytes)} · {utcStamp(d.uploadedAt)}
                    </p>
                    <p className="figure text-xs break-all text-graphite" title="SHA-256">
                      SHA-256 {d.sha256}
                    </p>
                  </li>
                ))}
              </ul>
            )}
            {canWrite && p.status !== 'screen_failed' && p.status !== 'withdrawn' && (
              <ConsentUpload studyId={study.id} participantId={p.id} />
            )}
          </CardBody>
        </Card>

        {canWrite && active && (
          <Card>
            <CardHeader title="Withdrawal" />
            <CardBody>
              <WithdrawForm studyId={study.id} participant={p} />
            </CardBody>
          </Card>
        )}
      </div>
    </div>
  );
}
