/**
 * Runs `work` when the page is idle (requestIdleCallback, at most `timeoutMs` later), or after a
 * short timeout where there is no such call: work that should not hold the frame being drawn.
 * With `afterMs`, the wait for idleness starts only that long from now (code and data that must
 * not fall between a screen's first content and its first paint).
 * @param opts timeoutMs: the longest wait once idleness is awaited (default 1000); afterMs: delay
 *   before awaiting it (default 0)
 * @returns cancels the work if it has not run yet
 */
export function whenIdle(work: () => void, opts: { timeoutMs?: number; afterMs?: number } = {}): () => void {
  if (typeof window === 'undefined') return () => {};
  const { timeoutMs = 1000, afterMs = 0 } = opts;
  let idle: number | undefined;
  let timer: number | undefined;
  const waitForIdle = () => {
    if (typeof window.requestIdleCallback === 'function') idle = window.requestIdleCallback(() => work(), { timeout: timeoutMs });
    else timer = window.setTimeout(work, 50);
  };
  let delay: number | undefined;
  if (afterMs > 0) delay = window.setTimeout(waitForIdle, afterMs);
  else waitForIdle();
  return () => {
    if (delay !== undefined) window.clearTimeout(delay);
    if (timer !== undefined) window.clearTimeout(timer);
    if (idle !== undefined) window.cancelIdleCallback(idle);
  };
}
