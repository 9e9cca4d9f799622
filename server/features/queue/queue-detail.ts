import { asc, eq } from 'drizzle-orm';
import { storedLabelSchema } from '@shared/schemas/label';
import type { QueueItemDetail } from '@shared/schemas/queue';
import type { Database } from '@server/db/client';
import { queueItems } from '@server/db/schema/queue-items';
import { channels } from '@server/db/schema/stations';
import { windowChannels, windows } from '@server/db/schema/uploads';
import { notFound } from '@server/errors';
import { loadQueueRow } from './queue-rows';

/**
 * Item detail for the review screen: the queue row, its label, the window span, the whole stored
 * analysis (the engine's output contract) and which channels have a sensitivity.
 * @param scope station ids the viewer may see ('all' or assigned ids); others answer 404
 * @throws AppError 404 when the item is missing or out of scope
 */
export async function getItemDetail(db: Database, itemId: number, scope: 'all' | readonly number[], claimIdleMinutes: number): Promise<QueueItemDetail> {
  const row = await loadQueueRow(db, eq(queueItems.id, itemId));
  if (!row || (scope !== 'all' && !scope.includes(row.stationId))) throw notFound(`Queue item ${itemId}`);
  const [extra] = await db
    .select({ label: queueItems.label, windowId: queueItems.windowId, endTime: windows.endTime, analysis: windows.analysis })
    .from(queueItems)
    .innerJoin(windows, eq(windows.id, queueItems.windowId))
    .where(eq(queueItems.id, itemId));
  if (!extra) throw notFound(`Window of queue item ${itemId}`);
  const chans = await db
    .select({ streamId: windowChannels.streamId, sampleRateHz: windowChannels.sampleRateHz, startTimeUs: windowChannels.startTimeUs, sampleCount: windowChannels.sampleCount })
    .from(windowChannels)
    .where(eq(windowChannels.windowId, extra.windowId))
    .orderBy(asc(windowChannels.streamId));
  const registry = await db.select({ location: channels.location, code: channels.code, sensitivity: channels.sensitivity }).from(channels).where(eq(channels.stationId, row.stationId));
  const label = extra.label === null || extra.label === undefined ? null : storedLabelSchema.safeParse(extra.label);
  return {
    ...row,
    label: label && label.success ? label.data : null,
    windowId: extra.windowId,
    windowEnd: extra.endTime.toISOString(),
    analysis: extra.analysis,
    channels: chans.map((c) => {
      const [, , loc = '', cha = ''] = c.streamId.split('.');
      const s = registry.find((r) => r.location === loc && r.code === cha)?.sensitivity ?? null;
      return {
        streamId: c.streamId,
        sampleRateHz: c.sampleRateHz,
        startTime: new Date(Math.floor(c.startTimeUs / 1000)).toISOString(),
        sampleCount: c.sampleCount,
        hasSensitivity: s !== null && s > 0,
      };
    }),
    claimIdleMinutes,
  };
}
