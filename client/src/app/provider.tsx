import { QueryClient, QueryClientProvider } from '@tanstack/react-query';
import { useState, type ReactNode } from 'react';
import { ToastProvider } from '@client/components/ui/toast';
import { AuthSessionProvider } from '@client/features/auth/components/session-boundary';
import { SessionProvider, type SessionValue } from '@client/lib/session-context';
import { ThemeProvider } from '@client/lib/theme-provider';

/** Builds the app's query client: no refetch on window focus (live updates come over the websocket). */
export function createQueryClient(): QueryClient {
  return new QueryClient({
    defaultOptions: {
      queries: { refetchOnWindowFocus: false, retry: 1, staleTime: 30_000 },
    },
  });
}

/** Props of <AppProvider>. */
export type AppProviderProps = {
  children: ReactNode;
  /**
   * A fixed session (previews and tests). Left out, the session comes from GET /api/auth/me
   * through the sign-in feature.
   */
  session?: SessionValue;
  /** The query client (main.tsx makes it first, to start the first screen's requests early); a new one when left out. */
  queryClient?: QueryClient;
};

/** Every app-wide provider, outermost first: theme, data, session, toasts. */
export function AppProvider({ children, session, queryClient: given }: AppProviderProps) {
  const [queryClient] = useState(() => given ?? createQueryClient());
  return (
    <ThemeProvider>
      <QueryClientProvider client={queryClient}>
        {session ? (
          <SessionProvider value={session}>
            <ToastProvider>{children}</ToastProvider>
          </SessionProvider>
        ) : (
          <AuthSessionProvider>
            <ToastProvider>{children}</ToastProvider>
          </AuthSessionProvider>
        )}
      </QueryClientProvider>
    </ThemeProvider>
  );
}
