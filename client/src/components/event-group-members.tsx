import { Link } from 'react-router';
import type { CandidateMember } from '../api/queue/candidate-events';
import { paths } from '../config/paths';
import { FlagMarker } from './ui/flag-marker';
import { StateMarker } from './ui/state-marker';

/** Props of <EventGroupMembers>. */
export type EventGroupMembersProps = {
  eventId: number;
  members: CandidateMember[];
  /** The item on screen, shown as "(this)" instead of a link. */
  currentId?: number;
  /** Search string (with or without "?") kept on the links, so the queue's filters survive. */
  search: string;
  /** Called when a member's link is followed (e.g. to close a dialog). */
  onNavigate?: () => void;
};

/**
 * The members of one candidate event — station, first trigger (ISO 8601 UTC, ms), flag, state —
 * each a link to its review. Used by the queue's group dialog and the review screen's group panel.
 */
export function EventGroupMembers({ eventId, members, currentId, search, onNavigate }: EventGroupMembersProps) {
  const query = search === '' || search.startsWith('?') ? search : `?${search}`;
  return (
    <table className="w-full text-sm">
      <caption className="sr-only">Members of event group {eventId}</caption>
      <thead>
        <tr className="text-left text-ink-muted">
          <th scope="col" className="pr-3 font-medium">Station</th>
          <th scope="col" className="pr-3 font-medium">First trigger (UTC)</th>
          <th scope="col" className="pr-3 font-medium">Flag</th>
          <th scope="col" className="font-medium">State</th>
        </tr>
      </thead>
      <tbody>
        {members.map((m) => {
          const code = m.station.split('.').pop();
          return (
            <tr key={m.itemId} className="border-t border-line" aria-current={m.itemId === currentId ? 'true' : undefined}>
              <th scope="row" className="py-1 pr-3 text-left font-mono font-normal whitespace-nowrap">
                {m.itemId === currentId ? (
                  <strong className="inline-flex h-6 items-center">{code} (this)</strong>
                ) : (
                  <Link className="inline-flex h-6 min-w-12 items-center" to={`${paths.queueItem.href}/${m.itemId}${query}`} onClick={onNavigate}>
                    {code} · item {m.itemId}
                  </Link>
                )}
              </th>
              <td className="pr-3 font-mono whitespace-nowrap tabular-nums">
                <time dateTime={m.arrival}>{new Date(m.arrival).toISOString()}</time>
              </td>
              <td className="pr-3">
                <FlagMarker flag={m.flag} />
              </td>
              <td>
                <StateMarker state={m.state} />
              </td>
            </tr>
          );
        })}
      </tbody>
    </table>
  );
}
