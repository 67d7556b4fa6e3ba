import { ForbiddenState } from '../../../components/ui/states.js';
import { AuditBrowser } from '../../../features/audit/components/audit-browser.js';
import { useStudyContext } from './study-context.js';

export function StudyAuditRoute() {
  const { tabs, study } = useStudyContext();
  if (!tabs.includes('audit')) return <ForbiddenState />;
  return (
    <>
      <title>{`Audit · ${study.code} · Counterpoise`}</title>
      <AuditBrowser studies={[study]} fixedStudyId={study.id} />
    </>
  );
}
