import { Link } from 'react-router';
import type { CandidateMember } from '@client/api/queue/candidate-events';
import { paths } from '@client/config/paths';
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
  /** `narrow` (a side panel): flag and state share one column, one above the other. */
  layout?: 'wide' | 'narrow';
};

/**
 * The members of one candidate event — station, first trigger (ISO 8601 UTC, ms), flag, state —
 * each a link to its review. Used by the queue's group dialog and the review screen's group panel.
 */
export function EventGroupMembers({ eventId, members, currentId, search, onNavigate, layout = 'wide' }: EventGroupMembersProps) {
  const narrow = layout === 'narrow';
  const query = search === '' || search.startsWith('?') ? search : `?${search}`;
  return (
    // In a narrow side panel the time may break after its date; anything still too wide scrolls
    // inside the panel instead of being cut off.
    <div className="overflow-x-auto">
      <table className="w-full text-sm">
        <caption className="sr-only">Members of event group {eventId}</caption>
        <thead>
          <tr className="text-left text-ink-muted">
            <th scope="col" className="pr-3 font-medium">Station</th>
            <th scope="col" className="pr-3 font-medium">First trigger (UTC)</th>
            {narrow ? (
              <th scope="col" className="font-medium">Flag · state</th>
            ) : (
              <>
                <th scope="col" className="pr-3 font-medium">Flag</th>
                <th scope="col" className="font-medium">State</th>
              </>
            )}
          </tr>
        </thead>
        <tbody>
          {members.map((m) => {
            const code = m.station.split('.').pop();
            return (
              <tr key={m.itemId} className="border-t border-line" aria-current={m.itemId === currentId ? 'true' : undefined}>
                <th scope="row" className="py-1 pr-3 text-left font-mono font-normal">
                  {m.itemId === currentId ? (
                    <strong className="inline-flex min-h-6 items-center whitespace-nowrap">{code} (this)</strong>
                  ) : (
                    <Link className="inline-block min-h-6 min-w-12 py-0.5" to={`${paths.queueItem.href}/${m.itemId}${query}`} onClick={onNavigate}>
                      <span className="whitespace-nowrap">{code}</span>{' '}
                      <span className="whitespace-nowrap">· item {m.itemId}</span>
                    </Link>
                  )}
                </th>
                <td className="pr-3 font-mono tabular-nums">
                  <time dateTime={m.arrival}>{isoWithBreak(m.arrival)}</time>
                </td>
                {narrow ? (
                  <td className="py-1">
                    <div className="flex flex-col items-start gap-1">
                      <FlagMarker flag={m.flag} />
                      <StateMarker state={m.state} />
                    </div>
                  </td>
                ) : (
                  <>
                    <td className="pr-3">
                      <FlagMarker flag={m.flag} />
                    </td>
                    <td>
                      <StateMarker state={m.state} />
                    </td>
                  </>
                )}
              </tr>
            );
          })}
        </tbody>
      </table>
    </div>
  );
}

/** ISO 8601 UTC with ms, allowed to break only between the date and the time (before the "T"). */
function isoWithBreak(at: string) {
  const iso = new Date(at).toISOString();
  const t = iso.indexOf('T');
  return (
    <>
      <span className="whitespace-nowrap">{iso.slice(0, t)}</span>
      <wbr />
      <span className="whitespace-nowrap">{iso.slice(t)}</span>
    </>
  );
}
