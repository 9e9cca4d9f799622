import { describe, expect, it } from 'vitest';
import { distinguishingReasons, reasonKind } from '@client/features/queue/lib/distinguishing-reason';

// Reasons written as the engine writes them (server/dsp/score.ts); the rows are test input.
const sta = (peak: string, id: string) => `STA/LTA peak ${peak} on ${id}, onset at 31.2 s (+4.1 MAD against KV01's dismissed noise), 1 trigger(s) above 3.5`;
const rows = [
  { id: 1, reasons: [sta('4.2', 'XX.KV01.00.HHZ'), 'whole-window high/low ratio 2.1, +3.0 MAD above its noise', 'the trigger is no stronger than this station\'s ordinary noise'] },
  { id: 2, reasons: [sta('9.8', 'XX.KV03.00.HHZ'), 'whole-window high/low ratio 5.1, +6.0 MAD above its noise'] },
  { id: 3, reasons: [sta('3.9', 'XX.KV05.00.HHN'), 'whole-window high/low ratio 1.1, +0.2 MAD above its noise', 'quality problem on XX.KV05.00.HHN: a gap of 2.0 s'] },
  { id: 4, reasons: [sta('5.0', 'XX.KV02.00.HHZ'), 'whole-window high/low ratio 0.4, 1.2 MAD below its noise'] },
  { id: 5, reasons: [] },
];

describe('the reason the queue shows', () => {
  it('treats reasons that differ only in figures and stream ids as one kind', () => {
    expect(reasonKind(sta('4.2', 'XX.KV01.00.HHZ'))).toBe(reasonKind(sta('9.8', 'XX.KV03.00.HHN')));
    expect(reasonKind('the trigger is no stronger than this station\'s ordinary noise')).not.toBe(reasonKind(sta('4.2', 'XX.KV01.00.HHZ')));
  });

  it('shows each row the reason fewest rows share, the engine’s first on a tie', () => {
    const shown = distinguishingReasons(rows);
    // Row 1 and 3: their verdicts are theirs alone.
    expect(shown.get(1)).toBe(2);
    expect(shown.get(3)).toBe(2);
    // Row 2: the STA/LTA sentence (4 rows) and "MAD above" (3 rows): the ratio, shared by fewer.
    expect(shown.get(2)).toBe(1);
    // Row 4: "MAD below" is its own.
    expect(shown.get(4)).toBe(1);
    expect(shown.has(5)).toBe(false);
    // Not the same first reason on every row.
    expect(new Set([1, 2, 3, 4].map((id) => rows.find((r) => r.id === id)?.reasons[shown.get(id) ?? 0])).size).toBe(4);
  });

  it('falls back to the first reason when a row stands alone', () => {
    expect(distinguishingReasons([{ id: 9, reasons: ['a 1', 'b 2'] }]).get(9)).toBe(0);
  });
});
