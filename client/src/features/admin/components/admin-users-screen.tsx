import { useCallback, useState } from 'react';
import type { AdminUser, InvitationRow } from '@shared/auth/schemas';
import { Button } from '@client/components/ui/button';
import { Dialog } from '@client/components/ui/dialog';
import { EmptyState } from '@client/components/ui/empty-state';
import { Loading } from '@client/components/ui/skeleton';
import { useToast } from '@client/components/ui/toast';
import { useInvitations, useRevokeInvitation, useSetActive, useStationOptions, useUsers } from '@client/features/admin/api/admin';
import { AccessDialog } from './access-dialog';
import { InvitationsList } from './invitations-list';
import { InviteForm } from './invite-form';
import { UsersTable } from './users-table';

/** The admin's people page: users table, invite form, invitations, access dialog, deactivation. */
export function AdminUsersScreen({ selfId, mailboxInUse }: { selfId: string; mailboxInUse: boolean }) {
  const users = useUsers();
  const invitations = useInvitations();
  const stations = useStationOptions();
  const setActive = useSetActive();
  const revoke = useRevokeInvitation();
  const toast = useToast();
  const [editing, setEditing] = useState<AdminUser | null>(null);
  const [confirming, setConfirming] = useState<AdminUser | null>(null);

  const onSetActive = useCallback(
    (u: AdminUser, active: boolean) => {
      if (!active) return setConfirming(u);
      setActive.mutate({ userId: u.id, active: true }, { onSuccess: () => toast.notify({ tone: 'ok', title: `${u.displayName} can sign in again` }), onError: (e) => toast.notify({ tone: 'danger', title: 'Not reactivated', body: e.message }) });
    },
    [setActive, toast],
  );
  const onRevoke = (inv: InvitationRow) =>
    revoke.mutate(inv.id, { onSuccess: () => toast.notify({ tone: 'ok', title: `Invitation to ${inv.email} withdrawn` }), onError: (e) => toast.notify({ tone: 'danger', title: 'Not withdrawn', body: e.message }) });

  return (
    <div className="flex max-w-7xl flex-col gap-6">
      <header>
        <h1 className="text-xl font-semibold">Users and invitations</h1>
        <p className="text-base text-ink-muted">Roles decide what each person may do; operators act only on the stations assigned to them.</p>
      </header>
      <section aria-labelledby="users-heading" className="flex flex-col gap-3">
        <h2 id="users-heading" className="text-md font-semibold">
          Users
        </h2>
        {users.isPending || stations.isPending ? (
          <Loading label="Loading users…" rows={5} />
        ) : users.isError ? (
          <EmptyState title="Users could not be loaded">{users.error.message}</EmptyState>
        ) : (
          <UsersTable users={users.data} stations={stations.data ?? []} selfId={selfId} onEditAccess={setEditing} onSetActive={onSetActive} busy={setActive.isPending} />
        )}
      </section>
      <InviteForm stations={stations.data ?? []} mailboxInUse={mailboxInUse} />
      <section aria-labelledby="invitations-heading" className="flex flex-col gap-3">
        <h2 id="invitations-heading" className="text-md font-semibold">
          Invitations
        </h2>
        {invitations.isPending ? <Loading label="Loading invitations…" rows={3} /> : invitations.isError ? <EmptyState title="Invitations could not be loaded">{invitations.error.message}</EmptyState> : <InvitationsList invitations={invitations.data} stations={stations.data ?? []} onRevoke={onRevoke} busy={revoke.isPending} />}
      </section>
      <AccessDialog user={editing} stations={stations.data ?? []} onClose={() => setEditing(null)} />
      <Dialog
        open={confirming !== null}
        onClose={() => setConfirming(null)}
        title={confirming ? `Deactivate ${confirming.displayName}?` : 'Deactivate'}
        description="They are signed out everywhere at once and cannot sign in until reactivated. Their work stays."
        actions={
          <>
            <Button onClick={() => setConfirming(null)}>Cancel</Button>
            <Button
              variant="danger"
              disabled={setActive.isPending}
              onClick={() => {
                const u = confirming;
                if (!u) return;
                setActive.mutate(
                  { userId: u.id, active: false },
                  { onSuccess: () => toast.notify({ tone: 'ok', title: `${u.displayName} deactivated` }), onError: (e) => toast.notify({ tone: 'danger', title: 'Not deactivated', body: e.message }), onSettled: () => setConfirming(null) },
                );
              }}
            >
              Deactivate
            </Button>
          </>
        }
      />
    </div>
  );
}
