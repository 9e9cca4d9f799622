import { z } from 'zod';

/**
 * Schema of the JSON printed by tests/fixtures/mseed/write-fixtures.c `dump` (libmseed's own
 * decoding of a file): the records as libmseed read them and the merged segments with samples.
 */
export const libmseedDumpSchema = z.object({
  records: z.array(
    z.object({
      id: z.string(),
      start_us: z.number().int(),
      samprate: z.number(),
      samplecnt: z.number().int(),
      encoding: z.string(),
      byteorder: z.enum(['big', 'little']),
      reclen: z.number().int(),
      b1001: z.boolean(),
      time_correct: z.number().int(),
      act_flags: z.number().int(),
    }),
  ),
  segments: z.array(
    z.object({
      id: z.string(),
      start_us: z.number().int(),
      samprate: z.number(),
      sampletype: z.string(),
      samples: z.array(z.number()),
    }),
  ),
});

/** libmseed's decoding of one file. */
export type LibmseedDump = z.infer<typeof libmseedDumpSchema>;
