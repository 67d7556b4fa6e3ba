import { ButtonLink } from '../../components/ui/button.js';
import { PageHeader } from '../../components/ui/page-header.js';
import { paths } from '../../config/paths.js';
import { useMe } from '../../features/auth/api/get-me.js';
import { StudyList } from '../../features/studies/components/study-list.js';
import { canCreateStudy } from '../../lib/authorization.js';

export function StudiesRoute() {
  const me = useMe();
  const mayCreate = me.data ? canCreateStudy(me.data) : false;
  return (
    <>
      <title>Studies · Counterpoise</title>
      <PageHeader
        title="Studies"
        description="The studies you belong to, with enrollment against target across all sites."
        actions={
          mayCreate && (
            <ButtonLink to={paths.studies.create.href()} variant="primary">
              New study
            </ButtonLink>
          )
        }
      />
      <StudyList mayCreate={mayCreate} />
    </>
  );
}
