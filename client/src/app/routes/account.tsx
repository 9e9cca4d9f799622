import { AccountScreen } from '@client/features/account/components/account-screen';
import { useSignOut } from '@client/features/auth/api/session';
import { RequirePermission } from '@client/features/auth/components/require-permission';

/** /account: your password and sessions (any signed-in person). */
export function AccountRoute() {
  const signOut = useSignOut();
  return <RequirePermission>{(me) => <AccountScreen me={me} onSignOut={() => signOut.mutateAsync().catch(() => {})} />}</RequirePermission>;
}
