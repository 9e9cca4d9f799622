import { describe, expect, it } from 'vitest';
import { clearDraft, describeUnsaved, draftKey, readDraft, unsavedWork, writeDraft, type DraftStorage, type ReviewDraftValues } from '@client/features/review/lib/review-draft';

/** A Map-backed stand-in for sessionStorage (the Web Storage getItem/setItem/removeItem contract). */
function memoryStorage(): DraftStorage & { map: Map<string, string> } {
  const map = new Map<string, string>();
  return {
    map,
    getItem: (k) => map.get(k) ?? null,
    setItem: (k, v) => void map.set(k, v),
    removeItem: (k) => void map.delete(k),
  };
}

const defaults: ReviewDraftValues = { eventType: 'earthquake', certainty: 'suspected', distanceClass: null, picks: [], note: '', noiseReason: 'unknown noise' };
const pick = { phase: 'S' as const, time: '2026-03-14T10:12:53.123456Z', onset: 'questionable' as const, polarity: 'undecidable' as const, streamId: 'XX.KV01.00.HHE' };

describe('review drafts', () => {
  it('counts picks, a note and changed choices as unsaved work; defaults are not', () => {
    expect(unsavedWork(defaults, defaults)).toEqual({ picks: 0, note: false, any: false });
    expect(unsavedWork({ ...defaults, note: '   ' }, defaults).any).toBe(false);
    expect(unsavedWork({ ...defaults, picks: [pick, pick] }, defaults)).toEqual({ picks: 2, note: false, any: true });
    expect(unsavedWork({ ...defaults, note: 'felt in the village' }, defaults)).toEqual({ picks: 0, note: true, any: true });
    expect(unsavedWork({ ...defaults, certainty: 'known' }, defaults).any).toBe(true);
    expect(describeUnsaved({ picks: 1, note: false })).toBe('1 pick');
    expect(describeUnsaved({ picks: 2, note: true })).toBe('2 picks and a note');
  });

  it('keeps a draft per person and item, gives it back, and removes it when the work is gone', () => {
    const s = memoryStorage();
    writeDraft(s, 'u1', 7, { ...defaults, picks: [pick] }, defaults, '2026-03-14T10:20:00.000Z');
    expect(s.map.has(draftKey('u1', 7))).toBe(true);
    expect(readDraft(s, 'u2', 7)).toBeNull();
    expect(readDraft(s, 'u1', 8)).toBeNull();
    expect(readDraft(s, 'u1', 7)).toEqual({ savedAt: '2026-03-14T10:20:00.000Z', values: { ...defaults, picks: [pick] } });
    // Back to the defaults: nothing to keep.
    writeDraft(s, 'u1', 7, defaults, defaults, '2026-03-14T10:21:00.000Z');
    expect(readDraft(s, 'u1', 7)).toBeNull();
    writeDraft(s, 'u1', 7, { ...defaults, note: 'n' }, defaults, '2026-03-14T10:22:00.000Z');
    clearDraft(s, 'u1', 7);
    expect(s.map.size).toBe(0);
  });

  it('keeps the last good draft while a value does not parse, and drops a stored draft that does not', () => {
    const s = memoryStorage();
    writeDraft(s, 'u1', 7, { ...defaults, picks: [pick] }, defaults, '2026-03-14T10:20:00.000Z');
    writeDraft(s, 'u1', 7, { ...defaults, picks: [pick, { ...pick, time: 'not a time' }] }, defaults, '2026-03-14T10:21:00.000Z');
    expect(readDraft(s, 'u1', 7)?.values.picks).toHaveLength(1);
    s.map.set(draftKey('u1', 9), '{"savedAt":1');
    expect(readDraft(s, 'u1', 9)).toBeNull();
    expect(s.map.has(draftKey('u1', 9))).toBe(false);
  });
});
