import { StudyOverview } from '../../../features/studies/components/study-overview.js';
import { useStudyContext } from './study-context.js';

export function StudyOverviewRoute() {
  const { study } = useStudyContext();
  return <StudyOverview study={study} />;
}
