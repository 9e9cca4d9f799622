import { z } from 'zod';
import { lazySchema } from './lazy-schema';
import { flagSchema } from './flags';

/**
 * Upload schemas shared by POST /api/uploads, the OpenAPI document and the upload page.
 */

/** A stream id `NET.STA.LOC.CHA` (location may be empty), as the CSV `streamId` field takes it. */
export const streamIdSchema = lazySchema(() =>
  z
    .string()
    .trim()
    .regex(/^[A-Za-z0-9]{1,8}\.[A-Za-z0-9]{1,8}\.[A-Za-z0-9]{0,8}\.[A-Za-z0-9]{1,8}$/, 'streamId must look like NET.STA.LOC.CHA, e.g. XX.KV01.00.HHZ'),
);

/**
 * An ISO-8601 date-time, UTC unless it names a zone: `2026-03-14T09:26:53.589Z`, a space instead of
 * the `T`, 1–9 fraction digits. The server converts it to µs exactly (server/formats/iso-time.ts).
 */
export const isoStartTimeSchema = lazySchema(() =>
  z
    .string()
    .trim()
    .regex(/^\d{4}-\d{2}-\d{2}[T ]\d{2}:\d{2}:\d{2}(\.\d{1,9})?(Z|[+-]\d{2}:?\d{2})?$/, 'startTime must be an ISO-8601 UTC time, e.g. 2026-03-14T09:26:53.589Z'),
);

/** The text fields of the multipart body of POST /api/uploads. */
export const uploadFieldsSchema = lazySchema(() =>
  z.object({
    /** Stream id for CSV files (MiniSEED files carry their own; wins over a CSV's `# stream=` line). */
    streamId: streamIdSchema.optional(),
    /**
     * Time of t = 0 for CSV files whose times are seconds (wins over a CSV's `# start=` line);
     * unused for MiniSEED and for CSV files with ISO-8601 times.
     */
    startTime: isoStartTimeSchema.optional(),
  }),
);

/** What happened to one file. */
export const uploadStatuses = ['created', 'duplicate', 'rejected'] as const;

/** The outcome of one uploaded file. */
export const uploadOutcomeSchema = lazySchema(() =>
  z.object({
    filename: z.string(),
    status: z.enum(uploadStatuses),
    /** The HTTP status this file alone would have had (201, 200, 403, 413, 422, 500...). */
    httpStatus: z.number().int(),
    /** For a rejected file: what was wrong, naming the stream, limit or decoder reason. */
    message: z.string().optional(),
    /** Error code of a rejected file (`unprocessable`, `forbidden`, `too_large`...). */
    code: z.string().optional(),
    uploadId: z.number().optional(),
    /** The queue items of the file (one per station window). */
    itemIds: z.array(z.number()).optional(),
    /** Per item: station, flag and score as stored. */
    items: z
      .array(
        z.object({
          id: z.number(),
          station: z.string(),
          flag: flagSchema,
          score: z.number(),
          windowStart: z.string(),
          channels: z.array(z.string()),
        }),
      )
      .optional(),
  }),
);

/** The outcome of one uploaded file. */
export type UploadOutcome = z.infer<typeof uploadOutcomeSchema>;

/** The answer of POST /api/uploads. */
export const uploadResponseSchema = lazySchema(() => z.object({ files: z.array(uploadOutcomeSchema) }));

/** The answer of POST /api/uploads. */
export type UploadResponse = z.infer<typeof uploadResponseSchema>;
