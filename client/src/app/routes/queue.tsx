import { QueueScreen } from '../../features/queue/components/queue-screen';

/** /queue: the live review queue. */
export function QueueRoute() {
  return <QueueScreen />;
}
