/**
 * Holding cache writes while a screen opens.
 *
 * A route change renders the new screen in a transition, in slices. Should a query that the screen
 * being left reads change meanwhile (the answer to the claim that opened the review, its live echo),
 * React draws the old screen once more at once and starts the new one over: on a slow machine
 * that cost the claim 100–150 ms. So the router calls `holdWhileOpening` when it moves to a review
 * (app/router.tsx), however the analyst went there; the review calls `screenOpened` once it has
 * drawn what matters; writes passed to `whenOpened` in between wait until the frame after that (at
 * most `maxMs`), in the order they came.
 */

let held: Array<() => void> | null = null;
let timer: ReturnType<typeof setTimeout> | undefined;

function release(): void {
  const fns = held;
  held = null;
  clearTimeout(timer);
  for (const fn of fns ?? []) fn();
}

/**
 * From now until `screenOpened` (or `maxMs`, ms, whichever comes first), `whenOpened` holds its
 * writes. A second call while holding changes nothing.
 */
export function holdWhileOpening(maxMs = 1500): void {
  if (held) return;
  held = [];
  timer = setTimeout(release, maxMs);
}

/** The opening screen has drawn: held writes run after the next frame. */
export function screenOpened(): void {
  if (!held) return;
  requestAnimationFrame(() => setTimeout(release, 0));
}

/**
 * Runs `fn` now, or, while a screen opens, once it has drawn.
 * @param first run it before the writes already held (the answer to the request that opened the
 *   screen, ahead of live changes that may have overtaken it: they then find the cache up to date)
 */
export function whenOpened(fn: () => void, first = false): void {
  if (!held) fn();
  else if (first) held.unshift(fn);
  else held.push(fn);
}

/** Whether writes are being held (for tests). */
export function isHolding(): boolean {
  return held !== null;
}
