import { ForbiddenState } from '../../../components/ui/states.js';
import { TextLink } from '../../../components/ui/text-link.js';
import { paths } from '../../../config/paths.js';
import { ImportPanel } from '../../../features/participant-import/components/import-panel.js';
import { useStudyContext } from './study-context.js';
import { WithStudyDetail } from './study-detail-gate.js';

export function StudyImportRoute() {
  const { tabs, study } = useStudyContext();
  if (!tabs.includes('participants')) return <ForbiddenState />;
  return (
    <>
      <title>{`Import participants · ${study.code} · Counterpoise`}</title>
      <p className="mb-4 text-sm">
        <TextLink to={paths.studies.tab.href(study.id, 'participants')}>← All participants</TextLink>
      </p>
      <WithStudyDetail studyId={study.id}>
        {(detail) =>
          detail.permissions.includes('participant.write') ? (
            <ImportPanel study={detail} />
          ) : (
            <ForbiddenState>Only site coordinators import participants.</ForbiddenState>
          )
        }
      </WithStudyDetail>
    </>
  );
}
