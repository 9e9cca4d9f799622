import { keepPreviousData, queryOptions, useQuery } from '@tanstack/react-query';
import { z } from 'zod';
import { channelResultSchema, storedAnalysisSchema } from '@shared/schemas/analysis';
import { queueItemDetailSchema, tracesResponseSchema } from '@shared/schemas/queue';
import { sortChannels } from '@shared/channel-order';
import { apiUrls, type DisplayRequest } from '@client/api/urls';
import { preparePictureWhenIdle } from '@client/features/review/lib/spectrogram-picture';
import { whenIdle } from '@client/lib/when-idle';
import { apiRequest } from '@client/lib/api-client';
import { queryKeys } from '@client/lib/query-keys';

/**
 * Query options of one item's detail (refetched by the live channel when its version moves on).
 * Its analysis is read for the screen (`analysisView`) while the page is idle after the answer, so
 * a prefetched item opens without that work.
 */
export function itemOptions(id: number) {
  return queryOptions({
    queryKey: queryKeys.queue.item(id),
    queryFn: async ({ signal }) => {
      const detail = await apiRequest(queueItemDetailSchema, apiUrls.item(id), { signal });
      whenIdle(() => void analysisView(detail.analysis));
      return detail;
    },
    staleTime: Infinity,
  });
}

/** One item's detail. */
export function useItem(id: number) {
  return useQuery(itemOptions(id));
}

/**
 * Query options of an item's display traces over [from, to) s (the whole window when null), about
 * `points` points per curve; with `display`, each channel also carries the analyst's display trace
 * (units and band) or why it was refused. One function for the screen (`useTraces`) and the
 * prefetch of the next item (use-prefetch-item.ts), so both use the very same key and request.
 */
export function tracesOptions(id: number, from: number | null, to: number | null, points: number, display: DisplayRequest | null = null) {
  return queryOptions({
    queryKey: queryKeys.queue.traces(id, from, to, points, display ? `${display.units}|${display.phase}|${display.band?.join('-') ?? 'none'}` : 'engine'),
    queryFn: async ({ signal }) => {
      const traces = await apiRequest(tracesResponseSchema, apiUrls.itemTraces(id, from, to, points, display), { signal });
      // The spectrogram's picture is made while the page is idle (a prefetched item then opens without that work).
      preparePictureWhenIdle(sortChannels(traces.channels, (c) => c.streamId)[0]);
      return traces;
    },
    staleTime: Infinity,
  });
}

/**
 * Display traces (`tracesOptions`); keeps the previous range on screen while a zoom loads.
 */
export function useTraces(id: number, from: number | null, to: number | null, points: number, display: DisplayRequest | null = null) {
  return useQuery({ ...tracesOptions(id, from, to, points, display), placeholderData: keepPreviousData });
}

/**
 * The fields of the stored analysis (shared/schemas/analysis.ts, the engine's output contract) the
 * review screen shows; `leadChannel` and `baseline` may be missing.
 */
export const analysisViewSchema = storedAnalysisSchema
  .pick({ score: true, flag: true, reasons: true, leadChannel: true, baseline: true })
  .partial({ leadChannel: true, baseline: true })
  .extend({
    channels: z.array(
      channelResultSchema.pick({
        id: true,
        sampleRate: true,
        units: true,
        bands: true,
        ratio: true,
        log10Ratio: true,
        staLta: true,
        snr: true,
        psd: true,
        dominantFrequency: true,
        spectralCentroid: true,
        signalSpectrum: true,
        signalSpectrumNote: true,
        noiseModels: true,
        qc: true,
        warnings: true,
      }),
    ),
  });

/** What the review screen reads from the analysis. */
export type AnalysisView = z.infer<typeof analysisViewSchema>;

/** Analyses already read, by the stored analysis object of the cached detail (dropped with it). */
const analysisViews = new WeakMap<object, AnalysisView | null>();

/**
 * What the review screen reads of an item's stored analysis (`analysisViewSchema`), or null when it
 * does not fit. Read once per analysis object: the detail's analysis keeps its identity in the query
 * cache (a claim patches the detail around it), so opening the item again costs nothing.
 */
export function analysisView(analysis: unknown): AnalysisView | null {
  if (typeof analysis !== 'object' || analysis === null) return null;
  const known = analysisViews.get(analysis);
  if (known !== undefined) return known;
  const r = analysisViewSchema.safeParse(analysis);
  const view = r.success ? r.data : null;
  analysisViews.set(analysis, view);
  return view;
}
