import { describe, expect, it } from 'vitest';
import { createTracesCache } from '@server/http/traces-cache';

const bytes = (n: number, fill = 1): Uint8Array => new Uint8Array(n).fill(fill);

describe('traces cache (bounded by bytes, least recently used out, one computation per key at a time)', () => {
  it('computes once per key and serves the kept answer afterwards', async () => {
    const cache = createTracesCache(1000);
    let runs = 0;
    const compute = async () => {
      runs += 1;
      return bytes(100);
    };
    const a = await cache.get('k', compute);
    const b = await cache.get('k', compute);
    expect(runs).toBe(1);
    expect(b).toBe(a);
    expect(cache.bytes).toBe(100);
  });

  it('shares one computation between requests that arrive while it runs', async () => {
    const cache = createTracesCache(1000);
    let runs = 0;
    let release: (v: Uint8Array) => void = () => {};
    const compute = () => {
      runs += 1;
      return new Promise<Uint8Array>((r) => (release = r));
    };
    const first = cache.get('k', compute);
    const second = cache.get('k', compute);
    release(bytes(10));
    expect(await first).toBe(await second);
    expect(runs).toBe(1);
  });

  it('drops the least recently used answers beyond the byte bound, and keeps nothing larger than it', async () => {
    const cache = createTracesCache(250);
    const runs: string[] = [];
    const compute = (k: string, n: number) => async () => {
      runs.push(k);
      return bytes(n);
    };
    await cache.get('a', compute('a', 100));
    await cache.get('b', compute('b', 100));
    await cache.get('a', compute('a', 100)); // a is now the most recently used
    await cache.get('c', compute('c', 100)); // 300 > 250: b leaves
    expect(cache.bytes).toBe(200);
    await cache.get('a', compute('a', 100));
    await cache.get('b', compute('b', 100));
    expect(runs).toEqual(['a', 'b', 'c', 'b']);
    await cache.get('huge', compute('huge', 400));
    expect(cache.bytes).toBeLessThanOrEqual(250);
    await cache.get('huge', compute('huge', 400));
    expect(runs.filter((k) => k === 'huge')).toHaveLength(2);
  });

  it('keeps no failed computation: the next request computes again', async () => {
    const cache = createTracesCache(1000);
    let runs = 0;
    const failing = async (): Promise<Uint8Array> => {
      runs += 1;
      throw new Error('worker failed');
    };
    await expect(cache.get('k', failing)).rejects.toThrow('worker failed');
    await expect(cache.get('k', failing)).rejects.toThrow('worker failed');
    expect(runs).toBe(2);
    expect(cache.bytes).toBe(0);
  });
});
