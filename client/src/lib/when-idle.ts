/**
 * Runs `work` when the page is idle (requestIdleCallback, at most a second later), or after a short
 * timeout where there is no such call: work that should not hold the frame being drawn.
 */
export function whenIdle(work: () => void): void {
  if (typeof window === 'undefined') return;
  if (typeof window.requestIdleCallback === 'function') window.requestIdleCallback(() => work(), { timeout: 1000 });
  else window.setTimeout(work, 50);
}
