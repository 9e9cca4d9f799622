import { eq } from 'drizzle-orm';
import { Job, type Queue, type QueueEvents } from 'bullmq';
import { z } from 'zod';
import { roleSchema } from '@shared/auth/roles';
import { uploadOutcomeSchema, type UploadOutcome } from '@shared/schemas/upload';
import { uploads } from '@server/db/schema/uploads';
import { unavailable } from '@server/errors';
import { ingestFile, overallStatus, sha256HexOffThread, type IngestCaller, type IngestDeps, type IngestFile, type IngestOptions } from '@server/features/ingest/ingest-upload';
import type { Logger } from '@server/logger';
import { isRedisDown, withinMs } from './redis-clients';

/**
 * Analysis through the job queue (multi-instance mode, issue 20). An app instance receives an
 * upload, checks the caller and the limits as ever, and queues one `analyse-window` job per file;
 * a `npm run worker` process takes the job and runs the whole ingest of that file (decode, analysis,
 * the one transaction, the change-log rows, the wake-up); the instance waits for the job's outcome
 * and answers the request with it, so the upload API stays synchronous (201 with the items).
 *
 * Exactly once: the job id is the file's SHA-256 with the caller (`analyseJobId`), so the same file
 * queued twice (a retried request) is one job; the uploads table's unique sha256 keeps the
 * original and its windows stored once whatever happens; and a job retried after its worker died
 * AFTER the commit (`attemptsStarted > 1`) recognises its own upload (`ownEarlierAttempt`) and
 * answers `created` with it.
 */

/** The BullMQ queue of analysis jobs. */
export const ANALYSE_QUEUE = 'seisift-analyse-window';
/** The job name. */
export const ANALYSE_JOB = 'analyse-window';

const callerSchema = z.union([
  z.object({
    kind: z.literal('user'),
    user: z.object({ id: z.string(), email: z.string(), displayName: z.string(), roles: z.array(roleSchema), stationIds: z.array(z.number().int()) }),
    ipAddress: z.string().nullable(),
  }),
  z.object({
    kind: z.literal('ingest'),
    ingest: z.object({ tokenId: z.number().int(), stationId: z.number().int(), label: z.string() }),
    ipAddress: z.string().nullable(),
  }),
]);

/** What an analysis job carries: one uploaded file (base64), who sent it and the request's options. */
export const analyseJobSchema = z.object({
  filename: z.string(),
  contentType: z.string().nullable(),
  /** The file's bytes, base64; emptied once the job has completed (the outcome stays). */
  bytes: z.string(),
  sha256: z.string().regex(/^[0-9a-f]{64}$/),
  caller: callerSchema,
  opts: z.object({ streamId: z.string().optional(), startTimeUs: z.number().int().optional() }),
});
export type AnalyseJobData = z.infer<typeof analyseJobSchema>;

/**
 * The job id of a file: its SHA-256 and who uploads it (a user id or an ingest token id), so a
 * request sent again after a 503 joins the job of the first rather than starting another, while
 * two people uploading the same bytes each get their own answer (the second hears "duplicate").
 * BullMQ refuses ids containing ":" and ids that are integers.
 */
export function analyseJobId(sha256: string, caller: IngestCaller): string {
  const who = caller.kind === 'user' ? `u${caller.user.id}` : `t${caller.ingest.tokenId}`;
  return `up-${sha256}-${who.replace(/[^A-Za-z0-9_-]/g, '_')}`;
}

/** Job options: retried twice after a failure (the database away), 1 s then 2 s later; kept 10 min after completion for a repeated request. */
export const analyseJobOptions = {
  attempts: 3,
  backoff: { type: 'exponential', delay: 1000 },
  removeOnComplete: { age: 600, count: 20_000 },
  removeOnFail: { age: 3600, count: 5_000 },
} as const;

/** The outcome as `created` (a retried job answering for the upload its own earlier attempt committed). */
export function asCreated(outcome: UploadOutcome): UploadOutcome {
  return { filename: outcome.filename, status: 'created', httpStatus: 201, ...(outcome.uploadId !== undefined ? { uploadId: outcome.uploadId } : {}), itemIds: outcome.itemIds ?? [], items: outcome.items ?? [] };
}

/**
 * Whether the stored upload `uploadId` was committed by an earlier attempt of this very job: the
 * same uploader, stored no earlier than the job was queued (created_at has whole seconds).
 */
async function ownEarlierAttempt(deps: IngestDeps, uploadId: number, caller: IngestCaller, queuedAtMs: number): Promise<boolean> {
  const [row] = await deps.db.select({ createdAt: uploads.createdAt, userId: uploads.uploadedByUserId, tokenId: uploads.ingestTokenId }).from(uploads).where(eq(uploads.id, uploadId));
  if (!row) return false;
  const same = caller.kind === 'user' ? row.userId === caller.user.id : row.tokenId === caller.ingest.tokenId;
  return same && row.createdAt.getTime() >= Math.floor(queuedAtMs / 1000) * 1000;
}

/** What the worker needs of a BullMQ job (so the processor can be driven without a queue). */
export interface AnalyseJobLike {
  data: unknown;
  /** When the job was queued, ms since epoch. */
  timestamp: number;
  /** How many times a worker has started it (more than 1: a retry, or a stalled job taken over). */
  attemptsStarted: number;
}

/**
 * The worker's processor: the whole ingest of one file (`ingestFile`). Throws only when the
 * database is unreachable (BullMQ then retries, `analyseJobOptions`); a refused file is an outcome.
 */
export async function processAnalyseJob(deps: IngestDeps, job: AnalyseJobLike): Promise<UploadOutcome> {
  const data = analyseJobSchema.parse(job.data);
  const file: IngestFile = { filename: data.filename, contentType: data.contentType, bytes: Buffer.from(data.bytes, 'base64') };
  const opts: IngestOptions = { ...(data.opts.streamId !== undefined ? { streamId: data.opts.streamId } : {}), ...(data.opts.startTimeUs !== undefined ? { startTimeUs: data.opts.startTimeUs } : {}) };
  const outcome = await ingestFile(deps, file, data.caller, opts);
  if (outcome.status === 'duplicate' && outcome.uploadId !== undefined && job.attemptsStarted > 1 && (await ownEarlierAttempt(deps, outcome.uploadId, data.caller, job.timestamp))) {
    return asCreated(outcome);
  }
  return outcome;
}

/** How uploads are ingested: in this process (single mode) or through the job queue (multi-instance mode). */
export interface UploadDispatcher {
  ingest(files: readonly IngestFile[], caller: IngestCaller, opts: IngestOptions): Promise<{ status: number; files: UploadOutcome[] }>;
}

const QUEUE_DOWN = 'Uploads are paused: the analysis job queue (Redis) cannot be reached; nothing was stored, send the files again shortly';


/**
 * The app instance's side: queues one job per file (all at once, so several workers analyse one
 * request's files side by side) and waits for each outcome, at most `waitMs`. Redis away when
 * queuing, or for the rest of the wait, answers 503 with Retry-After (AppError `unavailable`),
 * never 500: what a worker commits meanwhile is found again when the request is repeated.
 */
export function createQueuedUploads(opts: { queue: Queue; events: QueueEvents; waitMs: number; logger: Logger; ready: () => boolean }): UploadDispatcher {
  const { queue, events, waitMs } = opts;

  /** Queues the job of one file, or joins the job already queued for the same file and caller. */
  const enqueue = async (file: IngestFile, caller: IngestCaller, o: IngestOptions): Promise<string> => {
    const sha256 = await sha256HexOffThread(file.bytes);
    const id = analyseJobId(sha256, caller);
    const data: AnalyseJobData = {
      filename: file.filename,
      contentType: file.contentType ?? null,
      bytes: Buffer.from(file.bytes.buffer, file.bytes.byteOffset, file.bytes.byteLength).toString('base64'),
      sha256,
      caller,
      opts: { ...(o.streamId !== undefined ? { streamId: o.streamId } : {}), ...(o.startTimeUs !== undefined ? { startTimeUs: o.startTimeUs } : {}) },
    };
    try {
      // The queue's connection waits for Redis when it is away; a request must not.
      if (!opts.ready()) throw unavailable(QUEUE_DOWN);
      // A job of the same id that failed for good (the database away for all its attempts) is
      // replaced; any other is joined (BullMQ ignores an add whose id exists).
      const existing = await withinMs(Job.fromId(queue, id), 3000, 'read job');
      if (existing && (await withinMs(existing.isFailed(), 3000, 'job state'))) await withinMs(existing.remove(), 3000, 'remove job');
      await withinMs(queue.add(ANALYSE_JOB, data, { ...analyseJobOptions, jobId: id }), 5000, 'queue job');
      return id;
    } catch (err) {
      if (isRedisDown(err)) throw unavailable(QUEUE_DOWN);
      throw err;
    }
  };

  // One listener for all waiting requests: a job's completion or failure wakes its waiters, which
  // then read the job (the event carries no outcome worth trusting over the stored one).
  const waiters = new Map<string, Set<() => void>>();
  const wakeWaiters = ({ jobId }: { jobId: string }) => {
    for (const w of waiters.get(jobId) ?? []) w();
  };
  events.on('completed', wakeWaiters);
  events.on('failed', wakeWaiters);
  /** Resolves on the next event of job `id`, or after `ms`, whichever is first. */
  const nextEventOf = (id: string, ms: number) =>
    new Promise<void>((resolve) => {
      const set = waiters.get(id) ?? new Set<() => void>();
      waiters.set(id, set);
      const done = () => {
        clearTimeout(timer);
        set.delete(done);
        if (set.size === 0) waiters.delete(id);
        resolve();
      };
      const timer = setTimeout(done, ms);
      timer.unref();
      set.add(done);
    });

  /**
   * The outcome of job `id`: read when its completion event comes, and every second besides
   * (events published while this instance's link to Redis was down are missed).
   */
  const outcomeOf = async (id: string, filename: string): Promise<UploadOutcome> => {
    const deadline = Date.now() + waitMs;
    for (;;) {
      const next = nextEventOf(id, 1000);
      try {
        if (!opts.ready()) throw new Error('Connection is closed');
        const job = await withinMs(Job.fromId(queue, id), 3000, 'read job');
        if (!job) throw unavailable(`${filename}: the analysis job was lost (Redis restarted without it); nothing is known of the file, send it again`);
        if (job.finishedOn) {
          if (await withinMs(job.isCompleted(), 3000, 'job state')) return uploadOutcomeSchema.parse(job.returnvalue);
          // Failed for good: every attempt found the database away.
          throw unavailable(`${filename}: the database was unavailable for every attempt of the analysis; nothing was stored, send the file again shortly`);
        }
      } catch (err) {
        if (!isRedisDown(err)) throw err;
      }
      if (Date.now() >= deadline) throw unavailable(`${filename}: the analysis did not finish within ${Math.round(waitMs / 1000)} s (SEISIFT_INGEST_WAIT_S); send the file again to hear its outcome`, 10);
      await next;
    }
  };

  return {
    async ingest(files, caller, o) {
      const ids = await Promise.all(files.map((f) => enqueue(f, caller, o)));
      const outcomes = await Promise.all(ids.map((id, i) => outcomeOf(id, files[i]?.filename ?? 'upload')));
      return { status: overallStatus(outcomes), files: outcomes };
    },
  };
}
