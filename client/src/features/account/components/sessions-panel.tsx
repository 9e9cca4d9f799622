import { Badge } from '@client/components/ui/badge';
import { Button } from '@client/components/ui/button';
import { EmptyState } from '@client/components/ui/empty-state';
import { Loading } from '@client/components/ui/skeleton';
import { ScrollTable, Td, Th, ThActions, Tr } from '@client/components/ui/table';
import { useToast } from '@client/components/ui/toast';
import { useEndSessions, useSessions } from '@client/features/account/api/account';

/** A short, readable name for a browser from its user-agent string (display only). */
export function browserName(userAgent: string | null): string {
  if (!userAgent) return 'Unknown client';
  const browser = /Edg\//.test(userAgent) ? 'Edge' : /Firefox\//.test(userAgent) ? 'Firefox' : /Chrom(e|ium)\//.test(userAgent) ? 'Chromium-based browser' : /Safari\//.test(userAgent) ? 'Safari' : /curl|python|node/i.test(userAgent) ? 'Script' : 'Browser';
  const os = /Windows/.test(userAgent) ? 'Windows' : /Mac OS X/.test(userAgent) ? 'macOS' : /Android/.test(userAgent) ? 'Android' : /Linux/.test(userAgent) ? 'Linux' : /iPhone|iPad/.test(userAgent) ? 'iOS' : '';
  return os ? `${browser} on ${os}` : browser;
}

/** Your sessions: where and when each began, when it lapses; end one or all the others. */
export function SessionsPanel() {
  const sessions = useSessions();
  const end = useEndSessions();
  const toast = useToast();
  const endOne = (id: string) => end.mutate({ id }, { onSuccess: () => toast.notify({ tone: 'ok', title: 'Session ended' }) });
  return (
    <section aria-labelledby="sessions-heading" className="flex flex-col gap-3">
      <div className="flex items-center gap-3">
        <h2 id="sessions-heading" className="text-md font-semibold">
          Your sessions
        </h2>
        <Button size="sm" onClick={() => end.mutate('others', { onSuccess: () => toast.notify({ tone: 'ok', title: 'Other sessions ended' }) })} disabled={end.isPending || (sessions.data?.length ?? 0) < 2}>
          End all other sessions
        </Button>
      </div>
      {sessions.isPending ? (
        <Loading label="Loading your sessions…" rows={3} />
      ) : sessions.isError ? (
        <EmptyState title="Sessions could not be loaded">{sessions.error.message}</EmptyState>
      ) : (
        <ScrollTable
          label="Your sessions" caption="Signed-in sessions of your account, newest first (times in UTC)" captionHidden
          head={
            <Tr>
              <Th>Client</Th>
              <Th>Address</Th>
              <Th figure>Started</Th>
              <Th figure>Lapses if idle until</Th>
              <ThActions />
            </Tr>
          }
        >
          {sessions.data.map((s) => (
            <Tr key={s.id}>
              <Td>
                {browserName(s.userAgent)} {s.current ? <Badge tone="accent">this session</Badge> : null}
              </Td>
              <Td className="font-mono text-sm">{s.ipAddress ?? '—'}</Td>
              <Td figure>{s.createdAt}</Td>
              <Td figure>{s.expiresAt}</Td>
              <Td className="text-right">
                {s.current ? null : (
                  <Button size="sm" variant="quiet" onClick={() => endOne(s.id)} disabled={end.isPending} aria-label={`End session from ${browserName(s.userAgent)} started ${s.createdAt}`}>
                    End
                  </Button>
                )}
              </Td>
            </Tr>
          ))}
        </ScrollTable>
      )}
    </section>
  );
}
