import { useParams } from 'react-router-dom';
import { ErrorState, ForbiddenState, LoadingState, NotFoundState } from '../../../components/ui/states.js';
import { TextLink } from '../../../components/ui/text-link.js';
import { paths } from '../../../config/paths.js';
import { isApiError } from '../../../lib/api-client.js';
import { useParticipant } from '../../../features/participants/api/get-participant.js';
import { ParticipantDetailView } from '../../../features/participants/components/participant-detail.js';
import { useStudyContext } from './study-context.js';
import { WithStudyDetail } from './study-detail-gate.js';

export function StudyParticipantRoute() {
  const { tabs, study } = useStudyContext();
  const { participantId = '' } = useParams();
  const participant = useParticipant(study.id, participantId);
  if (!tabs.includes('participants')) return <ForbiddenState />;
  return (
    <>
      <title>{`${participant.data?.code ?? 'Participant'} · ${study.code} · Counterpoise`}</title>
      <p className="mb-4 text-sm">
        <TextLink to={paths.studies.tab.href(study.id, 'participants')}>← All participants</TextLink>
      </p>
      {participant.isPending ? (
        <LoadingState label="Loading the participant…" />
      ) : participant.isError ? (
        isApiError(participant.error, 'not_found') ? (
          <NotFoundState title="Participant not found">
            There is no such participant in this study, or it belongs to a site you do not work at.
          </NotFoundState>
        ) : (
          <ErrorState error={participant.error} onRetry={() => void participant.refetch()} />
        )
      ) : (
        <WithStudyDetail studyId={study.id}>
          {(detail) => (
            <>
              <h2 className="figure mb-4 text-xl font-semibold text-ink">{participant.data.code}</h2>
              <ParticipantDetailView study={detail} participant={participant.data} />
            </>
          )}
        </WithStudyDetail>
      )}
    </>
  );
}
