import { useQueryClient } from '@tanstack/react-query';
import { createContext, useContext, useEffect, type ReactNode } from 'react';
import type { Me } from '@shared/auth/schemas';
import { setUnauthenticatedHandler } from '@client/lib/api-client';
import { SessionProvider } from '@client/lib/session-context';
import { Loading } from '@client/components/ui/skeleton';
import { useMe } from '@client/features/auth/api/session';
import { queryKeys } from '@client/lib/query-keys';

const MeContext = createContext<Me | null>(null);

/** The full signed-in record (roles, station ids, whether the local mailbox exists), or null. */
export function useCurrentMe(): Me | null {
  return useContext(MeContext);
}

/**
 * Feeds the session context from GET /api/auth/me, once, for the whole app. While the first
 * answer is on its way a loading line shows; a 401 anywhere later clears the session and sends
 * the person to the sign-in page, which brings them back afterwards.
 */
export function AuthSessionProvider({ children }: { children: ReactNode }) {
  const me = useMe();
  const qc = useQueryClient();
  useEffect(() => {
    setUnauthenticatedHandler(() => {
      qc.setQueryData(queryKeys.session, null);
      const here = `${window.location.pathname}${window.location.search}`;
      if (window.location.pathname !== '/sign-in') window.location.assign(`/sign-in?next=${encodeURIComponent(here)}`);
    });
  }, [qc]);
  if (me.isPending) return <Loading label="Checking your session…" className="m-6" />;
  const value = me.data ?? null;
  return (
    <MeContext.Provider value={value}>
      <SessionProvider value={{ user: value ? { email: value.user.email, displayName: value.user.displayName, roles: value.user.roles } : null, features: { mailbox: value?.mailbox ?? false } }}>{children}</SessionProvider>
    </MeContext.Provider>
  );
}
