import { useQueryClient } from '@tanstack/react-query';
import { createContext, useContext, useEffect, useState, type ReactNode } from 'react';
import type { ConnectionState } from '@client/components/ui/connection-indicator';
import { applyChanges, refetchAll } from '@client/api/queue/live-patch';
import { createLiveClient, liveUrl } from '@client/lib/ws-client';
import { whenOpened } from '@client/lib/screen-opening';
import { queryKeys } from '@client/lib/query-keys';

const LiveContext = createContext<ConnectionState | undefined>(undefined);

/**
 * Opens the live channel once for the app (reconnecting by itself) and feeds its changes into the
 * query cache; children read the connection state with `useLiveConnection`. When the browser
 * comes back online the client reconnects at once instead of waiting out its backoff.
 */
export function LiveUpdatesProvider({ children }: { children: ReactNode }) {
  const qc = useQueryClient();
  const [state, setState] = useState<ConnectionState>('connecting');
  useEffect(() => {
    const client = createLiveClient({
      url: liveUrl(window.location),
      // While a screen opens, changes wait until it has drawn (lib/screen-opening.ts).
      onChanges: (changes) => whenOpened(() => applyChanges(qc, changes)),
      onRefetch: () => refetchAll(qc),
      // The session ended (signed out elsewhere, deactivated, roles changed): ask who is signed in.
      onSessionEnded: () => void qc.invalidateQueries({ queryKey: queryKeys.session }),
      onState: setState,
    });
    const online = () => client.reconnectNow();
    window.addEventListener('online', online);
    return () => {
      window.removeEventListener('online', online);
      client.stop();
    };
  }, [qc]);
  return <LiveContext.Provider value={state}>{children}</LiveContext.Provider>;
}

/** The live connection's state (undefined outside LiveUpdatesProvider). */
export function useLiveConnection(): ConnectionState | undefined {
  return useContext(LiveContext);
}
