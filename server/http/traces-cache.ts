import { LRUCache } from 'lru-cache';

/**
 * A small in-memory cache of computed display traces (the traces endpoint's JSON answers), least
 * recently used first out, bounded by bytes (lru-cache). The key names every input of the answer
 * (`planTraces`), so nothing is ever invalidated by hand: a changed profile or response is a new
 * key, and the old answer ages out. Requests for one key while it is being computed share that
 * computation (the review screen's prefetch and the screen itself often ask at once).
 */
export interface TracesCache {
  /** The answer under `key`, computed by `compute` when missing (and kept when it succeeds). */
  get(key: string, compute: () => Promise<Uint8Array>): Promise<Uint8Array>;
  /** Bytes held now. */
  readonly bytes: number;
}

/**
 * @param maxBytes bytes held at most (an answer larger than this is served but not kept)
 */
export function createTracesCache(maxBytes: number): TracesCache {
  const cache = new LRUCache<string, Uint8Array, () => Promise<Uint8Array>>({
    maxSize: maxBytes,
    sizeCalculation: (value) => Math.max(1, value.byteLength),
    fetchMethod: (_key, _stale, { context }) => context(),
  });
  return {
    get bytes() {
      return cache.calculatedSize;
    },
    async get(key, compute) {
      const value = await cache.fetch(key, { context: compute });
      if (value === undefined) throw new Error(`traces cache: no answer for ${key}`);
      return value;
    },
  };
}
