import { ForbiddenState } from '../../../components/ui/states.js';
import { BalanceDashboard } from '../../../features/balance/components/balance-dashboard.js';
import { useStudyContext } from './study-context.js';

export function StudyBalanceRoute() {
  const { tabs, study } = useStudyContext();
  if (!tabs.includes('balance') || !study.permissions.includes('balance.arms')) return <ForbiddenState />;
  return (
    <>
      <title>{`Balance · ${study.code} · Counterpoise`}</title>
      <BalanceDashboard study={study} />
    </>
  );
}
