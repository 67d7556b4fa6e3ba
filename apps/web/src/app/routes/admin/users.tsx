import { PageHeader } from '../../../components/ui/page-header.js';
import { ErrorState, LoadingState } from '../../../components/ui/states.js';
import { useStudies } from '../../../features/studies/api/get-studies.js';
import { UsersAdmin } from '../../../features/users/components/users-admin.js';
import { RequireNav } from '../require-nav.js';

export function AdminUsersRoute() {
  const studies = useStudies();
  return (
    <RequireNav item="users">
      <title>Users · Counterpoise</title>
      <PageHeader
        title="Users"
        description="Accounts, study roles and site assignments. Every change is audited with its reason."
      />
      {studies.isPending && <LoadingState label="Loading studies…" />}
      {studies.isError && <ErrorState error={studies.error} onRetry={() => void studies.refetch()} />}
      {studies.data && <UsersAdmin studies={studies.data} />}
    </RequireNav>
  );
}
