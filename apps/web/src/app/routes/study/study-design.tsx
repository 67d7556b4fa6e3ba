import { ErrorState, ForbiddenState, LoadingState } from '../../../components/ui/states.js';
import { useStudyDetail } from '../../../features/study-design/api/get-study-detail.js';
import { DesignEditor } from '../../../features/study-design/components/design-editor.js';
import { useStudyContext } from './study-context.js';

export function StudyDesignRoute() {
  const { tabs, study } = useStudyContext();
  const detail = useStudyDetail(study.id);
  if (!tabs.includes('design')) return <ForbiddenState />;
  return (
    <>
      <title>{`Design · ${study.code} · Counterpoise`}</title>
      {detail.isPending ? (
        <LoadingState label="Loading the design…" />
      ) : detail.isError ? (
        <ErrorState error={detail.error} onRetry={() => void detail.refetch()} />
      ) : (
        // Keyed by study: switching studies re-seeds the form; a save resets it in place.
        <DesignEditor key={detail.data.id} study={detail.data} />
      )}
    </>
  );
}
