import { PageHeader } from '../../components/ui/page-header.js';
import { StudyList } from '../../features/studies/components/study-list.js';

export function StudiesRoute() {
  return (
    <>
      <title>Studies · Counterpoise</title>
      <PageHeader
        title="Studies"
        description="The studies you belong to, with enrollment against target across all sites."
      />
      <StudyList />
    </>
  );
}
