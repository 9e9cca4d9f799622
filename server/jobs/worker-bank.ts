import type { BankTemplate } from '@server/dsp/template-bank';

/**
 * The station banks an analysis worker keeps between windows, so that a steady stream of ingests
 * does not copy a station's templates (about 12 MB per 1,000 templates of 10 s, 3 components at
 * 100 sps, float32) to the worker with every window.
 *
 * A bank is keyed by its station and its version: the ordered list of its template ids (newest
 * first, as the main thread loads them). A template's id names immutable samples, so two equal lists
 * are the same bank, and the list changes whenever a template is added or pruned. A task names the
 * version it wants and carries only the templates the main thread was told are missing here; the
 * worker answers with the ids it still lacks when it cannot assemble the version (`resolve`).
 */

/** What a task says about its bank. */
export interface BankRef {
  stationId: number;
  /** The version: the bank's template ids, in the bank's order. */
  ids: Int32Array;
  /** Templates sent along (those a worker said it lacked); usually none. */
  templates: BankTemplate[];
}

interface StationBank {
  ids: Int32Array;
  byId: Map<number, BankTemplate>;
  /** The assembled bank of `ids` (null until every template is present). */
  bank: BankTemplate[] | null;
  bytes: number;
}

/** Bytes of a template's samples (as held: typed arrays by their size, plain arrays at 8 a value). */
function templateBytes(t: BankTemplate): number {
  let b = 0;
  for (const s of t.samples) b += ArrayBuffer.isView(s) ? s.byteLength : s.length * 8;
  return b;
}

function sameIds(a: Int32Array, b: Int32Array): boolean {
  if (a.length !== b.length) return false;
  for (let i = 0; i < a.length; i++) if (a[i] !== b[i]) return false;
  return true;
}

/** Station banks, bounded in bytes (the least recently used station dropped first). */
export class WorkerBankCache {
  private readonly stations = new Map<number, StationBank>();
  private total = 0;
  constructor(readonly maxBytes = 128 * 1024 * 1024) {}

  /**
   * The bank `ref` names, after keeping `ref.templates`: the templates in version order, or the ids
   * still missing here. Templates no longer in the version are dropped from the station's entry once
   * the version is assembled (they were pruned).
   */
  resolve(ref: BankRef): { bank: BankTemplate[] } | { missing: number[] } {
    let entry = this.stations.get(ref.stationId);
    if (entry) this.stations.delete(ref.stationId);
    entry ??= { ids: new Int32Array(0), byId: new Map(), bank: null, bytes: 0 };
    this.stations.set(ref.stationId, entry);
    if (entry.bank && ref.templates.length === 0 && sameIds(entry.ids, ref.ids)) return { bank: entry.bank };
    for (const t of ref.templates) {
      if (entry.byId.has(t.id)) continue;
      entry.byId.set(t.id, t);
      const b = templateBytes(t);
      entry.bytes += b;
      this.total += b;
    }
    const missing: number[] = [];
    const bank: BankTemplate[] = [];
    for (const id of ref.ids) {
      const t = entry.byId.get(id);
      if (t) bank.push(t);
      else missing.push(id);
    }
    if (missing.length > 0) {
      entry.bank = null;
      this.evict(ref.stationId);
      return { missing };
    }
    // Assembled: forget what the version no longer holds.
    if (entry.byId.size > bank.length) {
      const keep = new Set(ref.ids);
      for (const [id, t] of entry.byId) {
        if (keep.has(id)) continue;
        entry.byId.delete(id);
        const b = templateBytes(t);
        entry.bytes -= b;
        this.total -= b;
      }
    }
    entry.ids = Int32Array.from(ref.ids);
    entry.bank = bank;
    this.evict(ref.stationId);
    return { bank };
  }

  /** Drops the least recently used stations (never `current`) while over the bound. */
  private evict(current: number): void {
    for (const [id, e] of this.stations) {
      if (this.total <= this.maxBytes) break;
      if (id === current) continue;
      this.stations.delete(id);
      this.total -= e.bytes;
    }
  }

  /** Bytes of template samples held. */
  get bytes(): number {
    return this.total;
  }

  /** Stations held. */
  get size(): number {
    return this.stations.size;
  }
}
