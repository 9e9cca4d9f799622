import { useEffect } from 'react';
import { QueueScreen } from '@client/features/queue/components/queue-screen';

/** How long after the queue appears the review screen's code starts loading, ms (then when idle). */
const REVIEW_CODE_AFTER_MS = 400;

/** /queue: the live review queue. */
export function QueueRoute() {
  // Load the review screen's code while the analyst looks at the list, so opening an item is
  // instant — once the list has been painted and the page is idle: evaluating that code (uPlot
  // among it) takes tens of milliseconds that must not fall between the rows and their first paint.
  useEffect(() => {
    const load = () => void import('./queue-item');
    let idle: number | undefined;
    const t = window.setTimeout(() => {
      if (typeof window.requestIdleCallback === 'function') idle = window.requestIdleCallback(load, { timeout: 1500 });
      else load();
    }, REVIEW_CODE_AFTER_MS);
    return () => {
      window.clearTimeout(t);
      if (idle !== undefined) window.cancelIdleCallback(idle);
    };
  }, []);
  return <QueueScreen />;
}
