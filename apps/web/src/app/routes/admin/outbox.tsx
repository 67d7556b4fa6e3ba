import { PageHeader } from '../../../components/ui/page-header.js';
import { OutboxView } from '../../../features/outbox/components/outbox-view.js';
import { RequireNav } from '../require-nav.js';

export function AdminOutboxRoute() {
  return (
    <RequireNav item="outbox">
      <title>Outbox · Counterpoise</title>
      <PageHeader
        title="Outbox"
        description="Mail caught by the local mail server: invitations, password resets and digests. Local installations only."
      />
      <OutboxView />
    </RequireNav>
  );
}
