import { describe, expect, it } from 'vitest';
import type { BankTemplate } from '@server/dsp/template-bank';
import { WorkerBankCache } from '@server/jobs/worker-bank';

/**
 * The station banks an analysis worker keeps between windows (server/jobs/worker-bank.ts): plumbing,
 * checked by what it must hand back (the templates of the version asked for, in its order) and what it
 * must ask for (the ids it lacks).
 */

const template = (id: number, m = 100): BankTemplate => ({ id, sampleRateHz: 100, ids: ['XX.KV01.00.HHZ'], samples: [new Float32Array(m).fill(id)] });
const ref = (stationId: number, ids: number[], templates: BankTemplate[] = []) => ({ stationId, ids: Int32Array.from(ids), templates });

describe('WorkerBankCache', () => {
  it('asks for what it lacks, then answers the version from what it keeps, in the version’s order', () => {
    const cache = new WorkerBankCache();
    expect(cache.resolve(ref(1, [3, 2, 1]))).toEqual({ missing: [3, 2, 1] });
    const first = cache.resolve(ref(1, [3, 2, 1], [template(1), template(2), template(3)]));
    expect('bank' in first && first.bank.map((t) => t.id)).toEqual([3, 2, 1]);
    // The same version again: nothing sent, the same templates back.
    const again = cache.resolve(ref(1, [3, 2, 1]));
    expect('bank' in again && again.bank.map((t) => t.id)).toEqual([3, 2, 1]);
    expect(cache.bytes).toBe(3 * 400);
  });

  it('a new template: only it is missing; a pruned one is dropped once the version is assembled', () => {
    const cache = new WorkerBankCache();
    cache.resolve(ref(1, [2, 1], [template(1), template(2)]));
    expect(cache.resolve(ref(1, [4, 2, 1]))).toEqual({ missing: [4] });
    const added = cache.resolve(ref(1, [4, 2, 1], [template(4)]));
    expect('bank' in added && added.bank.map((t) => t.id)).toEqual([4, 2, 1]);
    // Template 1 pruned: nothing to send, and its samples are let go.
    const pruned = cache.resolve(ref(1, [4, 2]));
    expect('bank' in pruned && pruned.bank.map((t) => t.id)).toEqual([4, 2]);
    expect(cache.bytes).toBe(2 * 400);
    // It is gone: a version naming it again asks for it.
    expect(cache.resolve(ref(1, [4, 2, 1]))).toEqual({ missing: [1] });
  });

  it('stations are kept apart, and over the bound the least recently used station goes first', () => {
    const cache = new WorkerBankCache(2 * 400 + 399);
    cache.resolve(ref(1, [1], [template(1)]));
    cache.resolve(ref(2, [2], [template(2)]));
    expect(cache.resolve(ref(1, [2]))).toEqual({ missing: [2] });
    cache.resolve(ref(1, [1]));
    // Station 3 pushes the total over: station 2 (least recently used) goes, station 1 stays.
    cache.resolve(ref(3, [3], [template(3)]));
    expect(cache.size).toBe(2);
    expect(cache.resolve(ref(2, [2]))).toEqual({ missing: [2] });
    expect('bank' in cache.resolve(ref(3, [3]))).toBe(true);
  });
});
