import { Outlet, useParams } from 'react-router-dom';
import { paths } from '../../../config/paths.js';
import { PageHeader } from '../../../components/ui/page-header.js';
import { ErrorState, LoadingState, NotFoundState } from '../../../components/ui/states.js';
import { TabNav } from '../../../components/ui/tab-nav.js';
import { TextLink } from '../../../components/ui/text-link.js';
import { useMe } from '../../../features/auth/api/get-me.js';
import { useStudy } from '../../../features/studies/api/get-studies.js';
import { BlindingBadge, KindBadge, StatusBadge } from '../../../features/studies/components/study-labels.js';
import { studyTabsFor } from '../../../lib/authorization.js';
import type { StudyOutletContext } from './study-context.js';
import { studyTabs } from './study-tabs.js';

export function StudyLayout() {
  const { studyId = '' } = useParams();
  const me = useMe();
  const study = useStudy(studyId);

  if (study.isPending) return <LoadingState label="Loading the study…" />;
  if (study.isError) return <ErrorState error={study.error} onRetry={() => void study.refetch()} />;
  if (!study.data || !me.data) {
    return (
      <NotFoundState title="Study not found">
        There is no study at this address, or you are not a member of it.
      </NotFoundState>
    );
  }

  const tabs = studyTabsFor(me.data, studyId);
  const context: StudyOutletContext = { study: study.data, tabs };

  return (
    <>
      <title>{`${study.data.code} · Counterpoise`}</title>
      <p className="mb-3 text-sm">
        <TextLink to={paths.studies.list.href()}>← All studies</TextLink>
      </p>
      <PageHeader
        eyebrow={<span className="figure text-clay">{study.data.code}</span>}
        title={study.data.title}
        actions={
          <div className="flex flex-wrap gap-1.5">
            <KindBadge kind={study.data.kind} />
            <BlindingBadge blinding={study.data.blinding} />
            <StatusBadge status={study.data.status} />
          </div>
        }
      />
      <TabNav
        label="Study sections"
        items={tabs.map((tab) => ({
          id: tab,
          label: studyTabs[tab].label,
          to: paths.studies.tab.href(studyId, studyTabs[tab].segment),
          end: tab === 'overview',
        }))}
      />
      <div className="pt-6">
        <Outlet context={context} />
      </div>
    </>
  );
}
