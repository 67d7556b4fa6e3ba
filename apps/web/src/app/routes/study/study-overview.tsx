import { PooledOverview } from '../../../features/balance/components/pooled-overview.js';
import { StudyOverview } from '../../../features/studies/components/study-overview.js';
import { useStudyContext } from './study-context.js';

export function StudyOverviewRoute() {
  const { study } = useStudyContext();
  return (
    <>
      <StudyOverview study={study} />
      {/* Pooled, blinded figures for everyone the server lets read them (sponsors, statisticians). */}
      {study.permissions.includes('balance.pooled') && (
        <div className="mt-8">
          <PooledOverview study={study} />
        </div>
      )}
    </>
  );
}
