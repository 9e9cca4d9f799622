import type { Redis } from 'ioredis';
import type { Logger } from '@server/logger';
import { createOutageLog } from '@server/realtime/outage-log';

/** The pub/sub channel on which every process says "I committed change-log rows". */
export const CHANGES_CHANNEL = 'seisift:changes';

/**
 * Folds the calls made within one turn of the event loop into one `send` (an upload commits a
 * change, regroups, notifies again: one message suffices, since the message carries no change,
 * only "read the change log"). A call made while a send is being scheduled is covered by it.
 */
export function coalesce(send: () => void): () => void {
  let queued = false;
  return () => {
    if (queued) return;
    queued = true;
    setImmediate(() => {
      queued = false;
      send();
    });
  };
}

/**
 * Whether a wake-up message should wake this process's hub: every message but its own (the hub
 * that published has already read the change log when it did).
 * @param message the published text: the sender's instance id
 */
export function wakesHub(message: string, ownInstanceId: string): boolean {
  return message !== ownInstanceId;
}

/** Publishes wake-ups: call `notify()` after each commit of change-log rows. */
export interface WakeupPublisher {
  notify(): void;
}

/**
 * A wake-up publisher over a command connection. A failed publish (Redis away) is logged once per
 * outage and dropped: the hubs' safety poll of the change log still finds the change, only later.
 */
export function createWakeupPublisher(redis: Redis, instanceId: string, logger: Logger): WakeupPublisher {
  const outage = createOutageLog(logger, 'live wake-up publish');
  return {
    notify: coalesce(() => {
      redis.publish(CHANGES_CHANNEL, instanceId).then(
        () => outage.ok(),
        (err: unknown) => outage.failed(err),
      );
    }),
  };
}

/**
 * Subscribes `subscriber` (a connection of role `subscriber`, used for nothing else) to the
 * wake-ups and calls `wake` for each from another process. ioredis subscribes again after a
 * reconnect, and `wake` runs then too, since wake-ups published while the link was down are lost
 * (the hub reads the change log once more).
 */
export async function subscribeWakeups(subscriber: Redis, instanceId: string, wake: () => void): Promise<void> {
  subscriber.on('message', (channel: string, message: string) => {
    if (channel === CHANGES_CHANNEL && wakesHub(message, instanceId)) wake();
  });
  subscriber.on('ready', wake);
  await subscriber.subscribe(CHANGES_CHANNEL);
}
