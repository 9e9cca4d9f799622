import { asc, eq, inArray } from 'drizzle-orm';
import { storedLabelSchema } from '@shared/schemas/label';
import { processingProfileSchema } from '@shared/schemas/processing-profile';
import { similarityCaution, type ItemMatch, type ItemMatchesResponse, type MatchSuggestion } from '@shared/schemas/similarity';
import type { Database } from '@server/db/client';
import { queueItems } from '@server/db/schema/queue-items';
import { waveformTemplates, windowMatches } from '@server/db/schema/templates';
import { windowChannels } from '@server/db/schema/uploads';
import { decodeStoredSamples } from '@server/db/samples-codec';
import { matchingTraces, type MatchingTraces } from '@server/dsp/templates';
import { itemWindowInScope } from '@server/features/queue/queue-traces';
import { decodeTemplateSamples } from './template-store';

/** Points per overlay curve at most (every k-th sample: the band-passed traces are smooth at that scale). */
const OVERLAY_POINTS = 600;

/** What the overlays of one item's matches are computed from (stored rows only: blobs, profile, times). */
export interface OverlayInput {
  /** The window's stored channels (samples as stored: the samples codec's blob). */
  channels: Array<{ streamId: string; sampleRateHz: number; startTimeUs: number; samples: Uint8Array }>;
  /** The station's stored profile (null: the defaults). */
  profile: unknown;
  /** Per match, in order: its template (null when pruned) and where it starts in the window. */
  matches: Array<{ matchStartUs: number; template: { channels: string[]; sampleCount: number; samples: Uint8Array } | null }>;
}

/** Computes the overlays of an item's matches (`matchOverlays`); the pool's worker by default. */
export type OverlayRunner = (input: OverlayInput) => Promise<Array<ItemMatch['overlay']>>;

/**
 * The overlays of one item's matches, in order: the window's matching traces are recomputed from its
 * stored samples with its station's profile (the same chain as at ingest: detrend, band-reject, the
 * high band), then each match's lead component and its template's (`overlay`). The filtering is the
 * heavy part (a long window is megabytes of samples), so the API runs this in the analysis pool.
 * Pure. A window whose traces cannot be rebuilt (a refused band) gets no overlays (nulls).
 */
export function matchOverlays(input: OverlayInput): Array<ItemMatch['overlay']> {
  let traces: MatchingTraces | null = null;
  try {
    const profile = processingProfileSchema.parse(input.profile ?? {});
    traces = matchingTraces(input.channels.map((c) => ({ id: c.streamId, sampleRateHz: c.sampleRateHz, startTimeUs: c.startTimeUs, samples: decodeStoredSamples(c.samples) })), profile);
  } catch {
    traces = null;
  }
  return input.matches.map((m) => (m.template && traces ? overlay(traces, m.template, m.matchStartUs) : null));
}

/** `matchOverlays` on the calling thread (tests, tools without a pool). */
export const overlaysInThread: OverlayRunner = (input) => Promise.resolve(matchOverlays(input));

/**
 * A queue item's stored matches, best first, with the label the best labelled match suggests (C at
 * or above `resemblesAt`) and, per match, the overlay of this window's band-passed lead component
 * and the template's, aligned at the match. The request thread only reads rows; the overlays'
 * filtering runs in `overlays` (the analysis pool in the API).
 * @throws AppError 404 when the item is missing or out of `scope`
 */
export async function itemMatches(db: Database, itemId: number, scope: 'all' | readonly number[], resemblesAt: number, overlays: OverlayRunner = overlaysInThread): Promise<ItemMatchesResponse> {
  const item = await itemWindowInScope(db, itemId, scope);
  const rows = await db
    .select({
      rank: windowMatches.rank,
      value: windowMatches.value,
      perChannel: windowMatches.perChannel,
      matchStartUs: windowMatches.matchStartUs,
      band: windowMatches.band,
      matchedWindowId: windowMatches.matchedWindowId,
      templateId: windowMatches.templateId,
      windowStart: windowMatches.windowStart,
    })
    .from(windowMatches)
    .where(eq(windowMatches.windowId, item.windowId))
    .orderBy(asc(windowMatches.rank));
  if (rows.length === 0) return { itemId, matches: [], suggestion: null, caution: similarityCaution };
  const matchedItems = await db
    .select({ id: queueItems.id, windowId: queueItems.windowId, windowStart: queueItems.windowStart, labelType: queueItems.labelType, label: queueItems.label })
    .from(queueItems)
    .where(inArray(queueItems.windowId, rows.map((r) => r.matchedWindowId)));
  const templateIds = rows.map((r) => r.templateId).filter((id): id is number => id !== null);
  const templates = templateIds.length
    ? await db.select().from(waveformTemplates).where(inArray(waveformTemplates.id, templateIds))
    : [];
  const chans = await db.select().from(windowChannels).where(eq(windowChannels.windowId, item.windowId)).orderBy(asc(windowChannels.streamId));
  const drawn = await overlays({
    channels: chans.map((c) => ({ streamId: c.streamId, sampleRateHz: c.sampleRateHz, startTimeUs: c.startTimeUs, samples: c.samples })),
    profile: item.profile,
    matches: rows.map((r) => {
      const t = templates.find((x) => x.id === r.templateId);
      return { matchStartUs: r.matchStartUs, template: t ? { channels: t.channels, sampleCount: t.sampleCount, samples: t.samples } : null };
    }),
  });
  const windowT0 = Math.min(...chans.map((c) => c.startTimeUs));
  let suggestion: MatchSuggestion | null = null;
  const matches: ItemMatch[] = rows.map((r, i) => {
    const mi = matchedItems.find((m) => m.windowId === r.matchedWindowId);
    const t = templates.find((x) => x.id === r.templateId);
    if (!suggestion && mi && mi.labelType !== null && r.value >= resemblesAt) {
      const label = storedLabelSchema.safeParse(mi.label);
      if (label.success && label.data.kind === 'event') suggestion = { kind: 'event', eventType: label.data.eventType, fromItemId: mi.id, value: r.value };
      else if (label.success && label.data.kind === 'noise') suggestion = { kind: 'noise', noiseReason: label.data.noiseReason, fromItemId: mi.id, value: r.value };
    }
    return {
      rank: r.rank,
      value: r.value,
      perChannel: r.perChannel,
      channels: t?.channels ?? [],
      matchedItemId: mi?.id ?? null,
      matchedWindowStart: (mi?.windowStart ?? r.windowStart).toISOString(),
      labelType: mi?.labelType ?? null,
      offsetS: (r.matchStartUs - windowT0) / 1e6,
      band: r.band,
      overlay: drawn[i] ?? null,
    };
  });
  return { itemId, matches, suggestion, caution: similarityCaution };
}

/** The lead (vertical, else first) component of the window over the match and the template's, each peak-scaled to 1. */
function overlay(traces: MatchingTraces, t: { channels: string[]; sampleCount: number; samples: Uint8Array }, matchStartUs: number): ItemMatch['overlay'] {
  const samples = decodeTemplateSamples(t.samples, t.channels.length, t.sampleCount);
  let c = t.channels.findIndex((id) => /Z$/.test(id));
  if (c < 0) c = 0;
  const channel = t.channels[c] as string;
  const wi = traces.ids.indexOf(channel);
  const w = samples[c];
  if (wi < 0 || !w) return null;
  const x = traces.traces[wi] as Float64Array;
  const fs = traces.sampleRateHz;
  const from = Math.round(((matchStartUs - traces.startTimeUs) / 1e6) * fs);
  const m = t.sampleCount;
  if (from < 0 || from + m > x.length) return null;
  const step = Math.max(1, Math.ceil(m / OVERLAY_POINTS));
  let xPeak = 0;
  let wPeak = 0;
  for (let i = 0; i < m; i++) {
    xPeak = Math.max(xPeak, Math.abs(x[from + i] as number));
    wPeak = Math.max(wPeak, Math.abs(w[i] as number));
  }
  const times: number[] = [];
  const win: number[] = [];
  const tpl: number[] = [];
  for (let i = 0; i < m; i += step) {
    times.push(i / fs);
    win.push(xPeak > 0 ? (x[from + i] as number) / xPeak : 0);
    tpl.push(wPeak > 0 ? (w[i] as number) / wPeak : 0);
  }
  return { channel, times, window: win, template: tpl };
}
