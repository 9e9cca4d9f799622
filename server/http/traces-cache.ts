/**
 * A small in-memory cache of computed display traces (the traces endpoint's JSON answers), least
 * recently used first out, bounded by bytes. The key names every input of the answer
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
  const kept = new Map<string, Uint8Array>();
  const pending = new Map<string, Promise<Uint8Array>>();
  let bytes = 0;
  const keep = (key: string, value: Uint8Array): void => {
    if (value.byteLength > maxBytes) return;
    kept.set(key, value);
    bytes += value.byteLength;
    for (const [k, v] of kept) {
      if (bytes <= maxBytes) break;
      kept.delete(k);
      bytes -= v.byteLength;
    }
  };
  return {
    get bytes() {
      return bytes;
    },
    async get(key, compute) {
      const hit = kept.get(key);
      if (hit) {
        // Most recently used: to the end of the map's order.
        kept.delete(key);
        kept.set(key, hit);
        return hit;
      }
      const running = pending.get(key);
      if (running) return running;
      const p = compute().then(
        (value) => {
          pending.delete(key);
          keep(key, value);
          return value;
        },
        (err: unknown) => {
          pending.delete(key);
          throw err;
        },
      );
      pending.set(key, p);
      return p;
    },
  };
}
