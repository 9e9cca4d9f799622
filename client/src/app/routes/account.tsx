import { AccountScreen } from '../../features/account/components/account-screen';
import { useSignOut } from '../../features/auth/api/session';
import { RequirePermission } from '../../features/auth/components/require-permission';

/** /account: your password and sessions (any signed-in person). */
export function AccountRoute() {
  const signOut = useSignOut();
  return <RequirePermission>{(me) => <AccountScreen me={me} onSignOut={() => signOut.mutateAsync().catch(() => {})} />}</RequirePermission>;
}
