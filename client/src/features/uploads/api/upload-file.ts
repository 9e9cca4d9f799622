import { apiErrorBodySchema } from '@shared/api-error';
import { uploadResponseSchema, type UploadOutcome } from '@shared/schemas/upload';

/** Progress of one file's request. */
export type UploadProgress =
  | { phase: 'uploading'; sentBytes: number; totalBytes: number }
  /** Every byte is sent; the server is decoding and analysing. */
  | { phase: 'analysing' };

/**
 * Sends one file to POST /api/uploads with XMLHttpRequest (fetch has no upload progress), calling
 * `onProgress` while the bytes go out and once they are all sent. Resolves with the file's
 * outcome; a refusal of the whole request (401, 403, 413) becomes a `rejected` outcome carrying
 * the server's message, and a network failure one that says so.
 * @param streamId the stream id for a CSV file (NET.STA.LOC.CHA)
 * @param startTime t = 0 of a CSV file whose times are seconds (ISO-8601, UTC)
 */
export function uploadFile(file: File, opts: { streamId?: string; startTime?: string; onProgress: (p: UploadProgress) => void; signal?: AbortSignal }): Promise<UploadOutcome> {
  return new Promise((resolve) => {
    const xhr = new XMLHttpRequest();
    xhr.open('POST', '/api/uploads');
    xhr.responseType = 'text';
    xhr.setRequestHeader('Accept', 'application/json');
    xhr.upload.onprogress = (e) => {
      if (e.lengthComputable) opts.onProgress({ phase: 'uploading', sentBytes: e.loaded, totalBytes: e.total });
    };
    xhr.upload.onload = () => opts.onProgress({ phase: 'analysing' });
    const rejected = (httpStatus: number, message: string): UploadOutcome => ({ filename: file.name, status: 'rejected', httpStatus, message });
    xhr.onload = () => {
      let json: unknown = null;
      try {
        json = JSON.parse(xhr.responseText);
      } catch {
        json = null;
      }
      const body = uploadResponseSchema.safeParse(json);
      const first = body.success ? body.data.files[0] : undefined;
      if (first) return resolve(first);
      const err = apiErrorBodySchema.safeParse(json);
      resolve(rejected(xhr.status, err.success ? err.data.error.message : `The server answered ${xhr.status} without an explanation`));
    };
    xhr.onerror = () => resolve(rejected(0, 'The connection to the server was lost during the upload; try again'));
    xhr.onabort = () => resolve(rejected(0, 'Upload cancelled'));
    opts.signal?.addEventListener('abort', () => xhr.abort());
    const form = new FormData();
    if (opts.streamId) form.append('streamId', opts.streamId);
    if (opts.startTime) form.append('startTime', opts.startTime);
    form.append('files', file, file.name);
    xhr.send(form);
  });
}
