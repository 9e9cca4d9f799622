import { availableParallelism } from 'node:os';
import { Piscina } from 'piscina';
import type { DecodeOptions } from '@server/formats/decode';
import type { DecodedStream } from '@server/formats/types';
import type { WindowLimits } from '@server/formats/window-limits';
import type { ProcessingProfile } from '@shared/schemas/processing-profile';
import type { AnalysisResult, AnalyzeOptions } from '@server/dsp/pipeline';
import type { TracesInput } from '@server/features/queue/queue-traces';
import type { BankTemplate } from '@server/dsp/template-bank';
import type { OverlayInput } from '@server/features/similarity/item-matches';
import type { ItemMatch } from '@shared/schemas/similarity';
import type { AnalysisTask, BankMissing, DecodeOutcome, DecodeTask, MatchedOutcome, MatchedTask } from './analysis-worker';

/**
 * A pool of worker threads for the heavy work of the server — decoding uploads, `analyzeWindow`,
 * and a queue item's display traces — so its event loop never blocks on them.
 */
export interface AnalysisPool {
  /**
   * Analyse one window in a worker. The streams' sample buffers are TRANSFERRED to the worker (the
   * caller's Float64Arrays are detached afterwards: pass copies if you still need them).
   * Rejects with the analysis error's message (e.g. a refused band).
   */
  run(streams: DecodedStream[], profile: ProcessingProfile, opts?: AnalyzeOptions): Promise<AnalysisResult>;
  /**
   * `run`, then the window's template and its matches against the station's bank (issue 19), in the
   * same worker task (the streams' buffers are transferred as in `run`). The workers keep each
   * station's bank between windows (worker-bank.ts): a task names the bank by station and version
   * (its template ids), and templates are copied only to a worker that says it lacks them — once per
   * worker for each new template, not with every window.
   */
  runMatched(streams: DecodedStream[], profile: ProcessingProfile, opts: AnalyzeOptions, bank: { stationId: number; templates: readonly BankTemplate[] }, match: { topK: number; minValue: number }): Promise<MatchedOutcome>;
  /**
   * Decodes an uploaded file in a worker (the bytes are copied there; the caller keeps its own)
   * and checks the window limits: the streams, or the refusal (422 undecodable, 413 over a limit).
   */
  decode(bytes: Uint8Array, opts: DecodeOptions, limits: WindowLimits): Promise<DecodeOutcome>;
  /**
   * A queue item's display traces as UTF-8 JSON text (`computeTraces` in a worker, rounded for
   * drawing by `tracesForDisplay`). The input's sample blobs are copied once and their copies
   * transferred.
   */
  traces(input: TracesInput): Promise<Uint8Array>;
  /**
   * The overlays of a queue item's matches (`matchOverlays` in a worker: the window's band-pass is the
   * heavy part). The input's blobs are copied to the worker.
   */
  overlays(input: OverlayInput): Promise<Array<ItemMatch['overlay']>>;
  /** Number of worker threads. */
  readonly threads: number;
  /**
   * Starts the workers now instead of with the first task (a lazy pool, `createLazyAnalysisPool`):
   * a worker under tsx takes seconds to load, which the first trace request must not wait for.
   */
  warm?(): void;
  /** Stop the workers (pending tasks are rejected). */
  close(): Promise<void>;
}

const isObject = (v: unknown): v is object => typeof v === 'object' && v !== null;

/** The fields a worker needs of a template (a station's template carries more: window, label). */
const bankTemplate = (t: BankTemplate): BankTemplate => ({ id: t.id, sampleRateHz: t.sampleRateHz, ids: t.ids, samples: t.samples });

/** The worker's answers are built by the same code on the other side; these checks catch a mix-up, not bad data. */
function isAnalysisResult(v: unknown): v is AnalysisResult {
  return isObject(v) && 'channels' in v && 'score' in v;
}
function isMatchedOutcome(v: unknown): v is MatchedOutcome {
  return isObject(v) && 'analysis' in v && 'matching' in v && isAnalysisResult(v.analysis);
}
function isBankMissing(v: unknown): v is BankMissing {
  return isObject(v) && 'missing' in v && Array.isArray(v.missing) && 'streams' in v && Array.isArray(v.streams);
}
function isDecodeOutcome(v: unknown): v is DecodeOutcome {
  return isObject(v) && 'ok' in v && typeof v.ok === 'boolean';
}

/**
 * Create the analysis pool (piscina). `threads` defaults to the machine's parallelism minus one
 * (at least 1). Under tsx (the worker is a .ts file) the workers start with `--import tsx`.
 * `templatesSent` counts the bank templates copied to workers so far (`runMatched`).
 */
export function createAnalysisPool(options: { threads?: number } = {}): AnalysisPool & { readonly templatesSent: number } {
  const threads = options.threads ?? Math.max(1, availableParallelism() - 1);
  if (!Number.isInteger(threads) || threads < 1) throw new RangeError(`the analysis pool needs a whole number of threads ≥ 1, got ${threads}`);
  const here = import.meta.url;
  const isTs = here.endsWith('.ts');
  const filename = new URL(isTs ? './analysis-worker.ts' : './analysis-worker.js', here).href;
  const pool = new Piscina<AnalysisTask | MatchedTask | DecodeTask | TracesInput | OverlayInput, unknown>({
    filename,
    minThreads: threads,
    maxThreads: threads,
    idleTimeout: 60_000,
    ...(isTs ? { execArgv: ['--import', 'tsx'] } : {}),
  });
  // Templates copied to workers so far (for the tests and benches: steady-state ingest sends none).
  let templatesSent = 0;
  return {
    threads,
    get templatesSent() {
      return templatesSent;
    },
    async run(streams, profile, opts = {}) {
      const buffers = new Set<ArrayBuffer>();
      for (const s of streams) {
        const b = s.samples.buffer;
        if (b instanceof ArrayBuffer && b.byteLength > 0) buffers.add(b);
      }
      const out = await pool.run({ streams, profile, opts }, { transferList: [...buffers] });
      if (!isAnalysisResult(out)) throw new Error('analysis worker: unexpected answer to an analysis');
      return out;
    },
    async runMatched(streams, profile, opts, bank, match) {
      const ids = Int32Array.from(bank.templates, (t) => t.id);
      const byId = new Map(bank.templates.map((t) => [t.id, t]));
      // Templates to send along: none at first; then those a worker said it lacked (a retry may land
      // on another worker, which may lack others: the set only grows, and after as many retries as
      // workers the whole bank goes).
      const sent = new Map<number, BankTemplate>();
      let current = streams;
      for (let attempt = 0; ; attempt++) {
        const buffers = new Set<ArrayBuffer>();
        for (const s of current) {
          const b = s.samples.buffer;
          if (b instanceof ArrayBuffer && b.byteLength > 0) buffers.add(b);
        }
        const templates = attempt > threads ? bank.templates.map(bankTemplate) : [...sent.values()];
        const task: MatchedTask = { streams: current, profile, opts, bank: { stationId: bank.stationId, ids, templates }, match };
        templatesSent += templates.length;
        const out = await pool.run(task, { name: 'matched', transferList: [...buffers] });
        if (isMatchedOutcome(out)) return out;
        if (!isBankMissing(out) || attempt > threads) throw new Error('analysis worker: unexpected answer to a matched analysis');
        for (const id of out.missing) {
          const t = byId.get(id);
          if (t) sent.set(id, bankTemplate(t));
        }
        current = out.streams;
      }
    },
    async decode(bytes, opts, limits) {
      const out = await pool.run({ bytes, opts, limits }, { name: 'decode' });
      if (!isDecodeOutcome(out)) throw new Error('analysis worker: unexpected answer to a decode');
      return out;
    },
    async traces(input) {
      // Own copies of the blobs (a driver's row buffer may hold more than one value), transferred.
      const channels = input.channels.map((c) => ({ ...c, samples: new Uint8Array(c.samples) }));
      const out = await pool.run({ ...input, channels }, { name: 'traces', transferList: channels.map((c) => c.samples.buffer) });
      if (!(out instanceof Uint8Array)) throw new Error('analysis worker: unexpected answer to traces');
      return out;
    },
    async overlays(input) {
      const out: unknown = await pool.run(input, { name: 'overlays' });
      if (!Array.isArray(out) || out.length !== input.matches.length) throw new Error('analysis worker: unexpected answer to overlays');
      return out as Array<ItemMatch['overlay']>;
    },
    async close() {
      await pool.destroy();
    },
  };
}

/**
 * The app's analysis pool (one per app context, built in `createAppContext`): `threads` worker
 * threads, SEISIFT_ANALYSIS_THREADS (default one per core). One thread analyses a 120 s 3-component
 * window in about 8–20 ms, so the 100 windows/s target needs two on a 2-core machine
 * (docs/PERFORMANCE.md). The workers start with the first task, so a context that never ingests nor
 * draws traces (most tests, the CLI) starts none.
 */
export function createLazyAnalysisPool(threads: number): AnalysisPool {
  let pool: AnalysisPool | null = null;
  const open = (): AnalysisPool => (pool ??= createAnalysisPool({ threads }));
  return {
    threads,
    run: (streams, profile, opts) => open().run(streams, profile, opts),
    runMatched: (streams, profile, opts, bank, match) => open().runMatched(streams, profile, opts, bank, match),
    decode: (bytes, opts, limits) => open().decode(bytes, opts, limits),
    traces: (input) => open().traces(input),
    overlays: (input) => open().overlays(input),
    warm: () => void open(),
    async close() {
      const started = pool;
      pool = null;
      await started?.close();
    },
  };
}
