import { ForbiddenState } from '../../../components/ui/states.js';
import { AnalysisWorkspace } from '../../../features/analysis/components/analysis-workspace.js';
import { useStudyContext } from './study-context.js';

export function StudyAnalysisRoute() {
  const { tabs, study } = useStudyContext();
  if (!tabs.includes('analysis') || !study.permissions.includes('analysis.run')) return <ForbiddenState />;
  return (
    <>
      <title>{`Analysis · ${study.code} · Counterpoise`}</title>
      <AnalysisWorkspace study={study} />
    </>
  );
}
