import { useEffect } from 'react';
import { QueueScreen } from '@client/features/queue/components/queue-screen';
import { whenIdle } from '@client/lib/when-idle';

/** How long after the queue appears the review screen's code starts loading, ms (then when idle). */
const REVIEW_CODE_AFTER_MS = 400;

/** /queue: the live review queue. */
export function QueueRoute() {
  // Load the review screen's code while the analyst looks at the list, so opening an item is
  // instant — once the list has been painted and the page is idle: evaluating that code (uPlot
  // among it) takes tens of milliseconds that must not fall between the rows and their first paint.
  useEffect(() => whenIdle(() => void import('./queue-item'), { afterMs: REVIEW_CODE_AFTER_MS, timeoutMs: 1500 }), []);
  return <QueueScreen />;
}
