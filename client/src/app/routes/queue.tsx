import { useEffect } from 'react';
import { QueueScreen } from '@client/features/queue/components/queue-screen';

/** /queue: the live review queue. */
export function QueueRoute() {
  // Load the review screen's code while the analyst looks at the list, so opening an item is instant.
  useEffect(() => {
    void import('./queue-item');
  }, []);
  return <QueueScreen />;
}
