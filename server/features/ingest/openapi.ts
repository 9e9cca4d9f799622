import { z } from 'zod';
import { uploadFieldsSchema, uploadResponseSchema } from '@shared/schemas/upload';
import { jsonResponse, type ApiOperation } from '@server/openapi/operation';

/** /api/uploads as router.ts serves it. */
export const ingestOperations: ApiOperation[] = [
  {
    method: 'post',
    path: '/api/uploads',
    summary: 'Upload waveform windows (MiniSEED 2, MiniSEED 3, CSV)',
    description:
      'Multipart body with one or more files in the field `files` and, for CSV, a `streamId` (when the file has no `# stream=` line) and a `startTime` (t = 0 of times in seconds, when the file has no `# start=` line). Each file gets its own outcome; ' +
      'a file already uploaded (same sha256) returns its existing items. 201 when any file was created, 200 when all were duplicates, ' +
      'else the most telling refusal (403 > 413 > 422). A signed-in operator or a station ingest token (Authorization: Bearer).',
    auth: 'session-or-token',
    permission: 'upload.create',
    body: { contentType: 'multipart/form-data', schema: uploadFieldsSchema.extend({ files: z.array(z.string().meta({ format: 'binary' })).meta({ description: 'Waveform files' }) }) },
    responses: {
      200: jsonResponse('Every file was a duplicate', uploadResponseSchema),
      201: jsonResponse('At least one file was stored and queued', uploadResponseSchema),
      413: { description: 'A file is over SEISIFT_MAX_UPLOAD_BYTES, or more than SEISIFT_MAX_UPLOAD_FILES files' },
      422: jsonResponse('No file could be used (outcomes name the reasons)', uploadResponseSchema),
    },
  },
];
