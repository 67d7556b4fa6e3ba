import { Callout } from '../../../components/ui/callout.js';
import { ForbiddenState } from '../../../components/ui/states.js';
import { TextLink } from '../../../components/ui/text-link.js';
import { paths } from '../../../config/paths.js';
import { EnrollmentFlow } from '../../../features/participants/components/enrollment-flow.js';
import { useStudyContext } from './study-context.js';
import { WithStudyDetail } from './study-detail-gate.js';

export function StudyEnrollRoute() {
  const { tabs, study } = useStudyContext();
  if (!tabs.includes('participants')) return <ForbiddenState />;
  return (
    <>
      <title>{`Screen and enroll · ${study.code} · Counterpoise`}</title>
      <p className="mb-4 text-sm">
        <TextLink to={paths.studies.tab.href(study.id, 'participants')}>← All participants</TextLink>
      </p>
      <WithStudyDetail studyId={study.id}>
        {(detail) => {
          if (!detail.permissions.includes('participant.write')) {
            return <ForbiddenState>Only site coordinators screen and enroll participants.</ForbiddenState>;
          }
          const sites = detail.sites.filter((s) => s.status === 'active');
          if (!detail.allocation) {
            return (
              <Callout tone="info" title="Not ready">
                The study design is not complete yet, so no one can be screened.
              </Callout>
            );
          }
          if (sites.length === 0) {
            return (
              <Callout tone="info" title="No site is enrolling">
                None of your sites is active in this study.
              </Callout>
            );
          }
          return <EnrollmentFlow study={detail} sites={sites} />;
        }}
      </WithStudyDetail>
    </>
  );
}
