import { useQueryClient } from '@tanstack/react-query';
import { useEffect, useState } from 'react';
import { createLiveClient, liveUrl, type LiveState } from '@client/lib/ws-client';
import { queryKeys } from '@client/lib/query-keys';

/**
 * Keeps the supervisor screens live: a live-channel client of their own that refetches the inbox
 * on every `inbox` change (the hint carries only an owner id and an unread count, never content),
 * and the review and candidate-event lists on `item` and `candidate_event` changes.
 * @returns the connection state, for the screen's indicator
 */
export function useSupervisorLive(): LiveState {
  const qc = useQueryClient();
  const [state, setState] = useState<LiveState>('connecting');
  useEffect(() => {
    let timer: ReturnType<typeof setTimeout> | null = null;
    const pending = new Set<Parameters<typeof queryKeys.supervisor.part>[0]>();
    const flush = () => {
      timer = null;
      for (const key of pending) void qc.invalidateQueries({ queryKey: queryKeys.supervisor.part(key) });
      pending.clear();
    };
    const client = createLiveClient({
      url: liveUrl(window.location),
      onChanges: (changes) => {
        for (const c of changes) {
          if (c.resource === 'inbox') pending.add('inbox');
          if (c.resource === 'item') {
            pending.add('review');
            pending.add('inbox');
            // A new or newly labelled item may move the screens' default period.
            pending.add('latest-windows');
          }
          if (c.resource === 'candidate_event' || c.resource === 'item') pending.add('candidates');
          // An event built, relocated, labelled or returned changes the catalogue rows.
          if (c.resource === 'event' || c.resource === 'candidate_event') pending.add('review');
        }
        // One refetch per burst of changes.
        if (pending.size > 0 && !timer) timer = setTimeout(flush, 150);
      },
      onRefetch: () => void qc.invalidateQueries({ queryKey: queryKeys.supervisor.all }),
      onState: setState,
    });
    return () => {
      if (timer) clearTimeout(timer);
      client.stop();
    };
  }, [qc]);
  return state;
}
