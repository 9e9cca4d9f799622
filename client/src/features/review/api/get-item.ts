import { keepPreviousData, queryOptions, useQuery } from '@tanstack/react-query';
import { z } from 'zod';
import { queueItemDetailSchema, tracesResponseSchema } from '@shared/schemas/queue';
import { apiRequest } from '@client/lib/api-client';
import { queueKeys } from '@client/api/queue/get-queue';

/** Query options of one item's detail (refetched by the live channel when its version moves on). */
export function itemOptions(id: number) {
  return queryOptions({ queryKey: queueKeys.item(id), queryFn: ({ signal }) => apiRequest(queueItemDetailSchema, `/api/queue/items/${id}`, { signal }), staleTime: Infinity });
}

/** One item's detail. */
export function useItem(id: number) {
  return useQuery(itemOptions(id));
}

/**
 * Display traces over [from, to) s (the whole window when null), about `points` points per curve;
 * keeps the previous range on screen while a zoom loads.
 */
export function useTraces(id: number, from: number | null, to: number | null, points: number) {
  const qs = new URLSearchParams({ points: String(points) });
  if (from !== null) qs.set('from', from.toFixed(3));
  if (to !== null) qs.set('to', to.toFixed(3));
  return useQuery({
    queryKey: queueKeys.traces(id, from, to, points),
    queryFn: ({ signal }) => apiRequest(tracesResponseSchema, `/api/queue/items/${id}/traces?${qs.toString()}`, { signal }),
    staleTime: Infinity,
    placeholderData: keepPreviousData,
  });
}

const num = z.number().nullable();

/** The part of the engine's output contract (server/dsp/pipeline.ts AnalysisResult) the review screen shows. */
export const analysisViewSchema = z.object({
  score: z.number(),
  flag: z.string(),
  reasons: z.array(z.string()),
  leadChannel: z.string().optional(),
  baseline: z.string().optional(),
  channels: z.array(
    z.object({
      id: z.string(),
      sampleRate: z.number(),
      units: z.string(),
      bands: z.object({ low: z.object({ fmin: z.number(), fmax: z.number(), energy: z.number() }), high: z.object({ fmin: z.number(), fmax: z.number(), energy: z.number() }) }),
      ratio: num,
      log10Ratio: num,
      staLta: z.object({ method: z.string(), peak: z.number(), peakTime: z.number(), triggers: z.array(z.object({ on: z.number(), off: num })) }),
      snr: num,
      psd: z.object({ freqs: z.array(z.number()), values: z.array(z.number()), units: z.string() }),
      dominantFrequency: num,
      spectralCentroid: num,
      /** Signal part over the pre-trigger noise (absent in analyses made before the engine had it). */
      signalSpectrum: z
        .object({ peakFrequency: num, peakSnr: num, centroid: num, fromS: z.number(), toS: z.number(), noiseFromS: z.number(), noiseToS: z.number() })
        .nullable()
        .optional(),
      signalSpectrumNote: z.string().nullable().optional(),
      noiseModels: z.object({ accelerationDb: z.array(num), nlnmDb: z.array(num), nhnmDb: z.array(num), medianPosition: num }).nullable(),
      qc: z.array(z.object({ severity: z.string(), message: z.string() })),
      warnings: z.array(z.string()),
    }),
  ),
});

/** What the review screen reads from the analysis. */
export type AnalysisView = z.infer<typeof analysisViewSchema>;
