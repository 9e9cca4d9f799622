import { describe, expect, it } from 'vitest';
import { median } from '@shared/math/median';

// Hand-worked cases of the textbook definition (middle value; mean of the two middle values for an
// even count; common practice).
describe('median', () => {
  it('takes the middle value of an odd count and the mean of the two middle values of an even one', () => {
    expect(median([3, 1, 2])).toBe(2);
    expect(median([4, 1, 3, 2])).toBe(2.5);
    expect(median([-5])).toBe(-5);
    expect(median([1, 1, 1, 100])).toBe(1);
  });

  it('is NaN for an empty list and leaves the input as it was', () => {
    expect(median([])).toBeNaN();
    const values = [5, 3, 9, 1];
    median(values);
    expect(values).toEqual([5, 3, 9, 1]);
  });
});
