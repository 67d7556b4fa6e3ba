import { useState } from 'react';
import type { AdminUser } from '@counterpoise/contracts/admin';
import { Badge, type BadgeTone } from '../../../components/ui/badge.js';
import { Button } from '../../../components/ui/button.js';
import { Callout } from '../../../components/ui/callout.js';
import { Card, CardBody, CardHeader } from '../../../components/ui/card.js';
import { EmptyState, ErrorState, LoadingState } from '../../../components/ui/states.js';
import { Table, TBody, TD, TH, THead, TR } from '../../../components/ui/table.js';
import { useUsers } from '../api/get-users.js';
import { EditAccessForm } from './edit-access-form.js';
import { InviteUserForm } from './invite-user-form.js';
import { studyRoleOptions, type StudyOption } from './memberships-editor.js';

const statusTone: Record<AdminUser['status'], BadgeTone> = {
  invited: 'ochre',
  active: 'moss',
  disabled: 'neutral',
};
const statusText: Record<AdminUser['status'], string> = {
  invited: 'Invited',
  active: 'Active',
  disabled: 'Disabled',
};

export function UsersAdmin({ studies }: { studies: StudyOption[] }) {
  const users = useUsers();
  const [editingId, setEditingId] = useState<string | null>(null);
  const [notice, setNotice] = useState<string | null>(null);
  const editing = users.data?.find((u) => u.id === editingId) ?? null;

  return (
    <div className="flex flex-col gap-8">
      <section aria-labelledby="users-heading" className="flex flex-col gap-4">
        <h2 id="users-heading" className="text-lg font-semibold text-ink">
          Accounts
        </h2>
        <div aria-live="polite">{notice && <Callout tone="success">{notice}</Callout>}</div>
        {users.isPending && <LoadingState label="Loading accounts…" />}
        {users.isError && <ErrorState error={users.error} onRetry={() => void users.refetch()} />}
        {users.data && users.data.length === 0 && (
          <EmptyState title="No accounts yet">Invite the first user below.</EmptyState>
        )}
        {users.data && users.data.length > 0 && (
          <UsersTable
            users={users.data}
            studies={studies}
            editingId={editingId}
            onEdit={(id) => {
              setNotice(null);
              setEditingId(id);
            }}
          />
        )}
        {editing && (
          <EditAccessForm
            key={editing.id}
            user={editing}
            studies={studies}
            onCancel={() => setEditingId(null)}
            onDone={(message) => {
              setEditingId(null);
              setNotice(message);
            }}
          />
        )}
      </section>
      <Card>
        <CardHeader
          title="Invite a user"
          description="The invitation e-mail carries a single-use link to set a name and password."
        />
        <CardBody>
          <InviteUserForm studies={studies} />
        </CardBody>
      </Card>
    </div>
  );
}

function UsersTable({
  users,
  studies,
  editingId,
  onEdit,
}: {
  users: AdminUser[];
  studies: StudyOption[];
  editingId: string | null;
  onEdit: (id: string) => void;
}) {
  const roleText = (role: string) =>
    studyRoleOptions.find((o) => o.value === role)?.label.replace(/ \(.*\)$/, '') ?? role;
  const studyCode = (id: string, fallback: string) => studies.find((s) => s.id === id)?.code ?? fallback;

  return (
    <Table>
      <caption className="sr-only">Accounts with their status and study roles</caption>
      <THead>
        <TR>
          <TH>Person</TH>
          <TH>Status</TH>
          <TH>Access</TH>
          <TH>
            <span className="sr-only">Actions</span>
          </TH>
        </TR>
      </THead>
      <TBody>
        {users.map((user) => (
          <TR key={user.id} className={editingId === user.id ? 'bg-spruce-wash/50' : undefined}>
            <TD>
              <div className="font-semibold">{user.displayName}</div>
              <div className="figure text-xs text-graphite">{user.email}</div>
            </TD>
            <TD>
              <Badge tone={statusTone[user.status]}>{statusText[user.status]}</Badge>
            </TD>
            <TD>
              <ul className="flex flex-col gap-1">
                {user.isAdmin && (
                  <li>
                    <Badge tone="clay">Administrator</Badge>
                  </li>
                )}
                {user.memberships.map((m) => (
                  <li key={`${m.studyId}-${m.role}`} className="text-sm">
                    <span className="figure text-xs text-clay">{studyCode(m.studyId, m.studyCode)}</span>{' '}
                    <span>{roleText(m.role)}</span>
                    {m.role === 'coordinator' && (
                      <span className="text-graphite">
                        {' '}
                        · <span className="figure">{m.siteIds.length}</span>{' '}
                        {m.siteIds.length === 1 ? 'site' : 'sites'}
                      </span>
                    )}
                  </li>
                ))}
                {!user.isAdmin && user.memberships.length === 0 && (
                  <li className="text-sm text-graphite">No roles</li>
                )}
              </ul>
            </TD>
            <TD className="text-right">
              <Button
                variant="secondary"
                size="sm"
                onClick={() => onEdit(user.id)}
                aria-label={`Edit access for ${user.displayName}`}
              >
                Edit access
              </Button>
            </TD>
          </TR>
        ))}
      </TBody>
    </Table>
  );
}
