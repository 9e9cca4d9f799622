import { useEffect } from 'react';
import { QueueScreen } from '@client/features/queue/components/queue-screen';

/** /queue: the live review queue. */
export function QueueRoute() {
  // Load the review screen's code while the analyst looks at the list, so opening an item is
  // instant — once the page is idle, so that its parsing does not delay the list's first paint.
  useEffect(() => {
    const load = () => void import('./queue-item');
    if (typeof window.requestIdleCallback === 'function') {
      const h = window.requestIdleCallback(load, { timeout: 1500 });
      return () => window.cancelIdleCallback(h);
    }
    const h = window.setTimeout(load, 300);
    return () => window.clearTimeout(h);
  }, []);
  return <QueueScreen />;
}
