import { flagSchema } from '@shared/schemas/flags';
import { itemStateSchema } from '@shared/schemas/item-states';
import type { QueueRow } from '@shared/schemas/queue';

/** One record selected with `queueRowColumns` (queue-rows.ts). */
export type QueueRowRecord = {
  id: number;
  state: string;
  score: number;
  flag: string;
  reasons: string[];
  network: string;
  stationCode: string;
  stationId: number;
  windowStart: Date;
  createdAt: Date;
  updatedAt: Date;
  version: number;
  claimedById: string | null;
  claimedByName: string | null;
  claimedAt: Date | null;
  updatedById: string | null;
  updatedByName: string | null;
  labelType: string | null;
  candidateEventId: number | null;
  candidateStationCount: number | null;
};

/**
 * The wire shape of a queue row (shared/schemas/queue.ts `queueRowSchema`): times as ISO 8601 UTC
 * with milliseconds, the station as `NET.STA`, people as id + display name, the candidate event as
 * id + station count.
 * @throws Error when the stored state or flag is not one of ours (a corrupt row)
 */
export function presentQueueRow(r: QueueRowRecord): QueueRow {
  return {
    id: r.id,
    state: itemStateSchema.parse(r.state),
    score: r.score,
    flag: flagSchema.parse(r.flag),
    reasons: r.reasons,
    station: `${r.network}.${r.stationCode}`,
    stationId: r.stationId,
    windowStart: r.windowStart.toISOString(),
    createdAt: r.createdAt.toISOString(),
    updatedAt: r.updatedAt.toISOString(),
    version: r.version,
    claimedBy: r.claimedById ? { id: r.claimedById, displayName: r.claimedByName ?? 'a removed user' } : null,
    claimedAt: r.claimedAt ? r.claimedAt.toISOString() : null,
    updatedBy: r.updatedById ? { id: r.updatedById, displayName: r.updatedByName ?? 'a removed user' } : null,
    labelType: r.labelType,
    candidateEvent: r.candidateEventId !== null ? { id: r.candidateEventId, stationCount: r.candidateStationCount ?? 0 } : null,
  };
}
