/** The per-account slow-down's delay (OWASP Authentication Cheat Sheet, "Login Throttling": progressive delay, not lock-out). */
import { describe, expect, it } from 'vitest';
import { progressiveDelayMs } from '@server/auth/rate-limit';

describe('progressiveDelayMs', () => {
  const s = { freeFailures: 3, baseDelayMs: 500, maxDelayMs: 8000 };
  it('is 0 for the free failures, then 500 ms doubling per failure, capped at 8 s (hand-worked)', () => {
    // min(8000, 500 · 2^(n − 3)) for n ≥ 3: 500, 1000, 2000, 4000, 8000, 8000.
    expect([0, 1, 2, 3, 4, 5, 6, 7, 8, 1000].map((n) => progressiveDelayMs(n, s))).toEqual([0, 0, 0, 500, 1000, 2000, 4000, 8000, 8000, 8000]);
  });
  it('with no free failures the first failure already costs the base delay', () => {
    expect(progressiveDelayMs(0, { ...s, freeFailures: 0 })).toBe(500);
  });
});
