import { useCandidateEvent } from '@client/api/queue/candidate-events';
import { EventGroupMembers } from '@client/components/event-group-members';
import { Button } from '@client/components/ui/button';
import { Dialog } from '@client/components/ui/dialog';
import { Loading } from '@client/components/ui/skeleton';

/**
 * The members of one candidate event (GET /api/supervisor/candidate-events/:id), each a link to
 * its review: the queue's way to see a group whose members sit far apart in the list.
 */
export function GroupDialog({ eventId, onClose, search }: { eventId: number | null; onClose: () => void; search: string }) {
  const ev = useCandidateEvent(eventId);
  return (
    <Dialog className="w-[min(42rem,calc(100vw-2rem))]" open={eventId !== null} onClose={onClose} title={`Event group #${eventId ?? ''}`} description="Items whose first triggers at several stations fall within the time their distances allow. Not located; no magnitude." actions={<Button onClick={onClose}>Close</Button>}>
      {ev.isPending ? (
        <Loading label="Loading the group…" />
      ) : ev.isError ? (
        <p className="text-sm">The group could not be loaded: {ev.error.message}</p>
      ) : (
        <EventGroupMembers eventId={eventId ?? 0} members={ev.data.members} search={search} onNavigate={onClose} />
      )}
    </Dialog>
  );
}
