import { ButtonLink } from '../../../components/ui/button.js';
import { ForbiddenState } from '../../../components/ui/states.js';
import { paths } from '../../../config/paths.js';
import { participantsExportHref } from '../../../features/participants/api/export-participants.js';
import { ParticipantsTable } from '../../../features/participants/components/participants-table.js';
import { buttonClass } from '../../../components/ui/button.js';
import { useStudyContext } from './study-context.js';
import { WithStudyDetail } from './study-detail-gate.js';

export function StudyParticipantsRoute() {
  const { tabs, study } = useStudyContext();
  if (!tabs.includes('participants')) return <ForbiddenState />;
  return (
    <>
      <title>{`Participants · ${study.code} · Counterpoise`}</title>
      <WithStudyDetail studyId={study.id}>
        {(detail) => {
          const canWrite = detail.permissions.includes('participant.write');
          return (
            <div className="flex flex-col gap-5">
              <div className="flex flex-wrap items-center justify-between gap-3">
                <div>
                  <h2 className="text-lg font-semibold text-ink">Participants</h2>
                  {detail.sites.length < study.siteCount && (
                    <p className="text-sm text-graphite">
                      Your sites only: {detail.sites.map((s) => s.code).join(', ')}.
                    </p>
                  )}
                </div>
                <div className="flex flex-wrap gap-2">
                  {canWrite && (
                    <ButtonLink to={paths.participants.enroll.href(study.id)} variant="primary">
                      Screen and enroll
                    </ButtonLink>
                  )}
                  {canWrite && (
                    <ButtonLink to={paths.participants.import.href(study.id)} variant="secondary">
                      Import CSV
                    </ButtonLink>
                  )}
                  <a href={participantsExportHref(study.id)} download className={buttonClass('secondary')}>
                    Export CSV
                  </a>
                </div>
              </div>
              <ParticipantsTable
                studyId={study.id}
                sites={detail.sites}
                // Open-label site staff may see one participant's arm, never a list of them:
                // arm counts by site would make the next allocation predictable (DOMAIN.md).
                showArms={detail.unblinded}
                siteScoped={detail.sites.length < study.siteCount}
              />
            </div>
          );
        }}
      </WithStudyDetail>
    </>
  );
}
