import { useNavigate } from 'react-router';
import { authPagePaths } from '@shared/auth/links';
import { roleLabels } from '@shared/auth/roles';
import type { Me } from '@shared/auth/schemas';
import { Badge } from '@client/components/ui/badge';
import { Button } from '@client/components/ui/button';
import { ChangePasswordForm } from './change-password-form';
import { SessionsPanel } from './sessions-panel';

/** Props of <AccountScreen>. */
export type AccountScreenProps = { me: Me; onSignOut: () => Promise<unknown> };

/** The account page: who you are, your roles, change password, your sessions, sign out. */
export function AccountScreen({ me, onSignOut }: AccountScreenProps) {
  const navigate = useNavigate();
  return (
    <div className="flex max-w-5xl flex-col gap-6">
      <header className="flex flex-wrap items-start gap-4">
        <div className="flex flex-col gap-1">
          <h1 className="text-xl font-semibold">Your account</h1>
          <p className="text-base">
            {me.user.displayName} · <span className="font-mono text-sm">{me.user.email}</span>
          </p>
          <ul aria-label="Your roles" className="flex flex-wrap gap-1">
            {me.user.roles.length ? (
              me.user.roles.map((r) => (
                <li key={r}>
                  <Badge tone="accent">{roleLabels[r]}</Badge>
                </li>
              ))
            ) : (
              <li className="text-sm text-ink-muted">No roles yet: ask an admin.</li>
            )}
          </ul>
        </div>
        <Button className="ml-auto" onClick={() => void onSignOut().finally(() => navigate(authPagePaths.signIn, { replace: true }))}>
          Sign out
        </Button>
      </header>
      <ChangePasswordForm email={me.user.email} />
      <SessionsPanel />
    </div>
  );
}
