import { EmptyState, ForbiddenState } from '../../../components/ui/states.js';
import { StatisticianCaution } from '../../../components/ui/statistician-caution.js';
import type { StudyTab } from '../../../lib/authorization.js';
import { useStudyContext } from './study-context.js';
import { studyTabs } from './study-tabs.js';

/** Stands in for a study section until its feature ships; keeps the role gate and caution. */
export function StudySectionPlaceholder({ tab }: { tab: StudyTab }) {
  const { tabs, study } = useStudyContext();
  const meta = studyTabs[tab];
  if (!tabs.includes(tab)) return <ForbiddenState />;

  return (
    <div className="flex flex-col gap-4">
      <title>{`${meta.label} · ${study.code} · Counterpoise`}</title>
      <h2 className="text-lg font-semibold text-ink">{meta.label}</h2>
      {meta.analysis && <StatisticianCaution />}
      <EmptyState title={`${meta.label} is not available yet`}>
        This section of the study is being built. Its address will stay the same.
      </EmptyState>
    </div>
  );
}
