import { useNavigate } from 'react-router-dom';
import { PageHeader } from '../../components/ui/page-header.js';
import { ForbiddenState } from '../../components/ui/states.js';
import { TextLink } from '../../components/ui/text-link.js';
import { paths } from '../../config/paths.js';
import { useMe } from '../../features/auth/api/get-me.js';
import { NewStudyForm } from '../../features/studies/components/new-study-form.js';
import { canCreateStudy } from '../../lib/authorization.js';

export function NewStudyRoute() {
  const me = useMe();
  const navigate = useNavigate();
  if (!me.data) return null;
  return (
    <>
      <title>New study · Counterpoise</title>
      <p className="mb-3 text-sm">
        <TextLink to={paths.studies.list.href()}>← All studies</TextLink>
      </p>
      <PageHeader
        title="New study"
        description="Name the study and say what kind it is. Its design follows on the next page."
      />
      {canCreateStudy(me.data) ? (
        <div className="max-w-4xl">
          <NewStudyForm
            isAdmin={me.data.isAdmin}
            onCreated={(study) =>
              void navigate(paths.studies.tab.href(study.id, 'design'), { replace: true })
            }
          />
        </div>
      ) : (
        <ForbiddenState>
          Studies are created by administrators and by study statisticians. Ask an administrator if you need a
          new study.
        </ForbiddenState>
      )}
    </>
  );
}
