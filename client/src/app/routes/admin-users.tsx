import { AdminUsersScreen } from '@client/features/admin/components/admin-users-screen';
import { RequirePermission } from '@client/features/auth/components/require-permission';

/** /admin/users: people, roles, station assignments, invitations (admins). */
export function AdminUsersRoute() {
  return <RequirePermission action="users.manage">{(me) => <AdminUsersScreen selfId={me.user.id} mailboxInUse={me.mailbox} />}</RequirePermission>;
}
