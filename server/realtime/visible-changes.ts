import { canSee, stationScope, type PolicyActor } from '@shared/auth/policies';
import type { ChangeAudience, ChangeMessage } from '@shared/realtime';

/** Who holds a socket, as the policy module sees them. */
export type Viewer = PolicyActor & { id: string };

/** A change ready to send: the message (shared by every socket that receives it whole) and who may see it. */
export interface PreparedChange {
  message: ChangeMessage;
  audience: ChangeAudience | null;
}

/**
 * The change as `viewer` may receive it, or null when they may not see it at all: the policy
 * module's `canSee` on the change's audience (the same rule as the API's per-station scope), and,
 * for a change listing items of several stations (a candidate event's `itemIds`), only the items
 * at stations the viewer may see — as GET /api/supervisor/candidate-events/:id lists only those
 * members. A change without an audience reaches nobody (fail closed).
 * @returns `change.message` itself when it goes out whole (so one encoding serves many sockets),
 *   a redacted copy, or null
 */
export function visibleTo(viewer: Viewer, change: PreparedChange): ChangeMessage | null {
  const { message, audience } = change;
  if (!audience || !canSee(viewer, audience)) return null;
  const summary = message.summary;
  if (!audience.itemStations || !summary || !Array.isArray(summary.itemIds)) return message;
  const scope = stationScope(viewer, audience.action);
  if (scope === 'all' || scope === 'none') return message;
  const mine = new Set(audience.itemStations.filter(([, stationId]) => scope.includes(stationId)).map(([itemId]) => itemId));
  const itemIds = summary.itemIds.filter((id: unknown) => typeof id === 'number' && mine.has(id));
  return { ...message, summary: { ...summary, itemIds } };
}
