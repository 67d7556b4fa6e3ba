import { PageHeader } from '../../components/ui/page-header.js';
import { AuditBrowser } from '../../features/audit/components/audit-browser.js';
import { useStudies } from '../../features/studies/api/get-studies.js';
import { RequireNav } from './require-nav.js';

export function AuditRoute() {
  const studies = useStudies();
  return (
    <RequireNav item="audit">
      <title>Audit trail · Counterpoise</title>
      <PageHeader
        title="Audit trail"
        description="Every change, sign-in and role change: who, what, when, why, with the values before and after."
      />
      <AuditBrowser studies={studies.data ?? []} />
    </RequireNav>
  );
}
