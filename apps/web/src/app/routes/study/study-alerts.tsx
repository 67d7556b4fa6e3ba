import { ForbiddenState } from '../../../components/ui/states.js';
import { AlertsView } from '../../../features/balance/components/alerts-view.js';
import { useStudyContext } from './study-context.js';

export function StudyAlertsRoute() {
  const { tabs, study } = useStudyContext();
  if (!tabs.includes('alerts') || !study.permissions.includes('alerts.manage')) return <ForbiddenState />;
  return (
    <>
      <title>{`Alerts · ${study.code} · Counterpoise`}</title>
      <AlertsView study={study} />
    </>
  );
}
