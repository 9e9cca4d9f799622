import { useMutation, useQueryClient } from '@tanstack/react-query';
import { z } from 'zod';
import { lazySchema } from '@shared/schemas/lazy-schema';
import { apiRequest } from '@client/lib/api-client';
import { queryKeys } from '@client/lib/query-keys';

const diffSchema = lazySchema(() => z.object({ field: z.string(), from: z.unknown(), to: z.unknown() }));

/** The import preview (server/features/stations/stationxml-import.ts ImportPreview). */
export const importPreviewSchema = lazySchema(() =>
  z.object({
    previewHash: z.string(),
    stations: z.array(
      z.object({
        station: z.string(),
        stationId: z.number().nullable(),
        status: z.enum(['new', 'changed', 'unchanged', 'invalid', 'refused']),
        fields: z.array(diffSchema),
        channels: z.array(z.object({ streamId: z.string(), status: z.enum(['new', 'changed', 'unchanged', 'skipped', 'invalid']), fields: z.array(diffSchema), message: z.string().optional() })),
        message: z.string().optional(),
        allowed: z.boolean(),
      }),
    ),
    counts: z.object({ newStations: z.number(), changedStations: z.number(), unchangedStations: z.number(), newChannels: z.number(), changedChannels: z.number(), invalid: z.number() }),
  }),
);

/** The import preview. */
export type ImportPreview = z.infer<typeof importPreviewSchema>;

async function send(path: string, file: File, previewHash?: string): Promise<ImportPreview> {
  const form = new FormData();
  if (previewHash) form.append('previewHash', previewHash);
  form.append('file', file, file.name);
  return apiRequest(importPreviewSchema, path, { method: 'POST', body: form });
}

/** POST /api/stations/import/preview: what the document would change (nothing is written). */
export const previewStationXml = (file: File) => send('/api/stations/import/preview', file);

/** POST /api/stations/import/apply: writes the previewed changes; refreshes every station query. */
export function useApplyStationXml() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: ({ file, previewHash }: { file: File; previewHash: string }) => send('/api/stations/import/apply', file, previewHash),
    onSuccess: () => qc.invalidateQueries({ queryKey: queryKeys.stations.all }),
  });
}
