import { describe, expect, expectTypeOf, it } from 'vitest';
import { z } from 'zod';
import { finiteNumberArraySchema } from '@shared/schemas/number-array';
import { tracesResponseSchema } from '@shared/schemas/queue';
import { eventTracesSchema } from '@shared/schemas/event-traces';
import { computeTraces, tracesForDisplay } from '@server/features/queue/queue-traces';
import { encodeSamples } from '@server/db/samples-codec';
import { syntheticStreams } from '@tests/setup/queue-fixtures';

/**
 * The one-loop number-array schema the traces answers are validated with (shared/schemas/number-array.ts)
 * accepts exactly what `z.array(z.number())` accepts — zod's own per-element check is the
 * reference: an array whose every element is a finite number (zod 4's z.number() refuses NaN
 * and ±Infinity, which JSON, RFC 8259 §6, cannot carry anyway) — and refuses the rest, naming the
 * first bad element.
 */
describe('finiteNumberArraySchema', () => {
  const reference = z.array(z.number());
  const cases: unknown[] = [
    [],
    [0, -1.5, 3e-300, 1.7976931348623157e308],
    [1, '2', 3],
    [1, null],
    [Number.NaN],
    [1, Number.POSITIVE_INFINITY],
    [Number.NEGATIVE_INFINITY],
    // A hole (sparse array) reads as undefined.
    [1, , 3], // eslint-disable-line no-sparse-arrays
    [true],
    [[1]],
    'not an array',
    { 0: 1, length: 1 },
    null,
    undefined,
    42,
  ];

  it('accepts and refuses exactly what z.array(z.number()) does', () => {
    for (const c of cases) expect(finiteNumberArraySchema.safeParse(c).success, JSON.stringify(c) ?? String(c)).toBe(reference.safeParse(c).success);
    expectTypeOf<z.infer<typeof finiteNumberArraySchema>>().toEqualTypeOf<number[]>();
  });

  it('names the first bad element by its index', () => {
    const r = finiteNumberArraySchema.safeParse([0.5, 1, 'x', Number.NaN]);
    expect(r.success).toBe(false);
    expect(r.error?.issues).toHaveLength(1);
    expect(r.error?.issues[0]?.path).toEqual([2]);
    expect(r.error?.issues[0]?.message).toBe('element 2 must be a finite number, got "x"');
    expect(finiteNumberArraySchema.safeParse([1, null]).error?.issues[0]?.message).toBe('element 1 must be a finite number, got null');
  });

  it('the traces answers: a real one parses; one bad sample anywhere is refused with its path', () => {
    const streams = syntheticStreams('KV01', Date.UTC(2026, 2, 14, 9, 0, 0) * 1000, { burstAtS: 40, durationS: 60 });
    const answer = JSON.parse(
      JSON.stringify(
        tracesForDisplay(
          computeTraces({
            channels: streams.map((s) => ({ streamId: s.id, sampleRateHz: s.sampleRateHz, startTimeUs: s.startTimeUs, sampleCount: s.samples.length, samples: encodeSamples(s.samples) })),
            profile: null,
            sensitivities: {},
            query: { points: 800 },
          }),
        ),
      ),
    ) as { channels: Array<{ raw: unknown[]; spectrogram: { db: unknown[] } }> };
    expect(tracesResponseSchema.safeParse(answer).success).toBe(true);
    const ch = answer.channels[1];
    if (!ch) throw new Error('no second channel');
    ch.raw[37] = 'NaN';
    const bad = tracesResponseSchema.safeParse(answer);
    expect(bad.success).toBe(false);
    expect(bad.error?.issues[0]?.path).toEqual(['channels', 1, 'raw', 37]);
    ch.raw[37] = 0;
    ch.spectrogram.db[5] = null;
    expect(tracesResponseSchema.safeParse(answer).error?.issues[0]?.path).toEqual(['channels', 1, 'spectrogram', 'db', 5]);

    const event = { points: 100, members: [{ itemId: 1, channels: [{ streamId: 'XX.KV01.00.HHZ', sampleRateHz: 100, startTime: '2026-03-14T09:00:00.000000Z', units: 'm/s', bucket: 1, times: [0, 0.01, 0.02], values: [1e-7, -2e-7, 3e-7] }] }] };
    expect(eventTracesSchema.safeParse(event).success).toBe(true);
    const badEvent = structuredClone(event);
    (badEvent.members[0]?.channels[0]?.values as unknown[])[1] = '-2e-7';
    expect(eventTracesSchema.safeParse(badEvent).error?.issues[0]?.path).toEqual(['members', 0, 'channels', 0, 'values', 1]);
  });
});
