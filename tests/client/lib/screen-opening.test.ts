import { afterEach, beforeEach, describe, expect, it, vi } from 'vitest';
import { holdWhileOpening, isHolding, screenOpened, whenOpened } from '@client/lib/screen-opening';

/*
 * Writes held while a screen opens (client/src/lib/screen-opening.ts): they wait for the opened
 * screen's next frame, or the longest wait, and run in order, the opening request's answer first.
 * Frames are simulated: requestAnimationFrame runs its callback 16 ms later (fake timers, where a
 * zero-delay timeout fires after 1 ms, as in Node).
 */

describe('screen-opening', () => {
  beforeEach(() => {
    vi.useFakeTimers();
    vi.stubGlobal('requestAnimationFrame', (cb: FrameRequestCallback) => setTimeout(() => cb(0), 16));
  });
  afterEach(() => {
    vi.runOnlyPendingTimers();
    vi.useRealTimers();
    vi.unstubAllGlobals();
  });

  it('runs writes at once when nothing opens', () => {
    const ran: string[] = [];
    whenOpened(() => ran.push('a'));
    expect(ran).toEqual(['a']);
    expect(isHolding()).toBe(false);
  });

  it('holds writes until the frame after the screen says it has drawn, the answer first', () => {
    const ran: string[] = [];
    holdWhileOpening();
    whenOpened(() => ran.push('live echo'));
    whenOpened(() => ran.push('answer'), true);
    whenOpened(() => ran.push('later change'));
    vi.advanceTimersByTime(500);
    expect(ran).toEqual([]);
    screenOpened();
    expect(ran).toEqual([]);
    vi.advanceTimersByTime(16);
    expect(ran).toEqual([]);
    vi.advanceTimersByTime(1);
    expect(ran).toEqual(['answer', 'live echo', 'later change']);
    expect(isHolding()).toBe(false);
    whenOpened(() => ran.push('after'));
    expect(ran.at(-1)).toBe('after');
  });

  it('lets the writes go after the longest wait when the screen never says so', () => {
    const ran: string[] = [];
    holdWhileOpening(1500);
    whenOpened(() => ran.push('x'));
    vi.advanceTimersByTime(1499);
    expect(ran).toEqual([]);
    vi.advanceTimersByTime(1);
    expect(ran).toEqual(['x']);
    // A late signal from the screen changes nothing.
    screenOpened();
    vi.advanceTimersByTime(100);
    expect(ran).toEqual(['x']);
  });

  it('a second hold while holding keeps the first deadline', () => {
    const ran: string[] = [];
    holdWhileOpening(1000);
    whenOpened(() => ran.push('x'));
    vi.advanceTimersByTime(600);
    holdWhileOpening(1000);
    vi.advanceTimersByTime(400);
    expect(ran).toEqual(['x']);
  });
});
