import type { ReactNode } from 'react';
import { Navigate, useLocation } from 'react-router';
import { authPagePaths } from '@shared/auth/links';
import { can, type Action } from '@shared/auth/policies';
import type { Me } from '@shared/auth/schemas';
import { EmptyState } from '@client/components/ui/empty-state';
import { useCurrentMe } from './session-boundary';

/**
 * Shows `children(me)` to a signed-in person whose roles reach `action` (the shared policy
 * module; the server checks again on every request). Nobody signed in: off to sign-in and back.
 * Signed in without the right: a plain refusal.
 */
export function RequirePermission({ action, children }: { action?: Action; children: (me: Me) => ReactNode }) {
  const me = useCurrentMe();
  const location = useLocation();
  if (!me) return <Navigate to={`${authPagePaths.signIn}?next=${encodeURIComponent(`${location.pathname}${location.search}`)}`} replace />;
  if (action && !can(me.user, action)) return <EmptyState title="Not for your roles">This page needs a role you do not hold. An admin can change your roles.</EmptyState>;
  return <>{children(me)}</>;
}
