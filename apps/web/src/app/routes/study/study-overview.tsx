import { Link } from 'react-router-dom';
import { Callout } from '../../../components/ui/callout.js';
import { PooledOverview } from '../../../features/balance/components/pooled-overview.js';
import { StudyOverview } from '../../../features/studies/components/study-overview.js';
import { useStudyContext } from './study-context.js';

export function StudyOverviewRoute() {
  const { study } = useStudyContext();
  return (
    <>
      {study.status === 'setup' && (
        <Callout tone="info" className="mb-5" title="This study is being set up">
          {study.permissions.includes('study.design') ? (
            <>
              Add its arms, sites, baseline covariates, eligibility criteria and allocation scheme on the{' '}
              <Link to="design" className="font-semibold text-spruce underline underline-offset-4">
                Design tab
              </Link>
              . Enrollment opens once a complete design is saved.
            </>
          ) : (
            <>Enrollment opens once the study&apos;s statistician has saved a complete design.</>
          )}
        </Callout>
      )}
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
