import { availableParallelism } from 'node:os';
import { Piscina } from 'piscina';
import type { DecodedStream } from '@server/formats/types';
import type { ProcessingProfile } from '@shared/schemas/processing-profile';
import type { AnalysisResult, AnalyzeOptions } from '@server/dsp/pipeline';
import type { AnalysisTask } from './analysis-worker';

/** A pool of worker threads running `analyzeWindow`, so the server's event loop never blocks on it. */
export interface AnalysisPool {
  /**
   * Analyse one window in a worker. The streams' sample buffers are TRANSFERRED to the worker (the
   * caller's Float64Arrays are detached afterwards: pass copies if you still need them).
   * Rejects with the analysis error's message (e.g. a refused band).
   */
  run(streams: DecodedStream[], profile: ProcessingProfile, opts?: AnalyzeOptions): Promise<AnalysisResult>;
  /** Number of worker threads. */
  readonly threads: number;
  /** Stop the workers (pending tasks are rejected). */
  close(): Promise<void>;
}

/**
 * Create the analysis pool (piscina). `threads` defaults to the machine's parallelism minus one
 * (at least 1). Under tsx (the worker is a .ts file) the workers start with `--import tsx`.
 */
export function createAnalysisPool(options: { threads?: number } = {}): AnalysisPool {
  const threads = options.threads ?? Math.max(1, availableParallelism() - 1);
  if (!Number.isInteger(threads) || threads < 1) throw new RangeError(`the analysis pool needs a whole number of threads ≥ 1, got ${threads}`);
  const here = import.meta.url;
  const isTs = here.endsWith('.ts');
  const filename = new URL(isTs ? './analysis-worker.ts' : './analysis-worker.js', here).href;
  const pool = new Piscina<AnalysisTask, AnalysisResult>({
    filename,
    minThreads: threads,
    maxThreads: threads,
    idleTimeout: 60_000,
    ...(isTs ? { execArgv: ['--import', 'tsx'] } : {}),
  });
  return {
    threads,
    run(streams, profile, opts = {}) {
      const buffers = new Set<ArrayBuffer>();
      for (const s of streams) {
        const b = s.samples.buffer;
        if (b instanceof ArrayBuffer && b.byteLength > 0) buffers.add(b);
      }
      return pool.run({ streams, profile, opts }, { transferList: [...buffers] });
    },
    async close() {
      await pool.destroy();
    },
  };
}

/**
 * The app's analysis pool (one per app context): `threads` worker threads, SEISIFT_ANALYSIS_THREADS
 * (default one per core). One thread analyses a 120 s 3-component window in about 8–20 ms, so the
 * 100 windows/s target needs two on a 2-core machine (docs/PERFORMANCE.md). The workers start with
 * the first window, so a context that never ingests (most tests, the CLI) starts none.
 */
export function createLazyAnalysisPool(threads: number): AnalysisPool {
  let pool: AnalysisPool | null = null;
  return {
    threads,
    run(streams, profile, opts) {
      pool ??= createAnalysisPool({ threads });
      return pool.run(streams, profile, opts);
    },
    async close() {
      const open = pool;
      pool = null;
      await open?.close();
    },
  };
}
