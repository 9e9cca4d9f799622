import { readlinkSync } from 'node:fs';
import { setPriority } from 'node:os';
import { move, transferableSymbol, valueSymbol } from 'piscina';
import { capMessage, clipInput, MAX_QUOTED_CHARS } from '@shared/quote-input';
import { decodeWaveform, type DecodeOptions } from '@server/formats/decode';
import { WaveformParseError, type DecodedStream } from '@server/formats/types';
import type { ProcessingProfile } from '@shared/schemas/processing-profile';
import { analyzeWindow, type AnalysisResult, type AnalyzeOptions } from '@server/dsp/pipeline';
import { computeTraces, tracesForDisplay, type TracesInput } from '@server/features/queue/queue-traces';
import { windowLimitProblem, type WindowLimits } from '@server/formats/window-limits';
import { PreparedCache } from '@server/dsp/template-bank';
import { matchWindow, type MatchingOutcome } from '@server/features/similarity/window-matching';
import { matchOverlays, type OverlayInput } from '@server/features/similarity/item-matches';
import { WorkerBankCache, type BankRef } from './worker-bank';

/**
 * Runs this worker thread below the event loop's priority: Linux nice +`WORKER_NICE` for this thread
 * only (setpriority(2) on a thread id changes that thread alone, and /proc/thread-self names it;
 * proc(5)). On a machine with as many busy workers as cores the server's event loop then still
 * gets a core at once, so requests such as GET /api/health are answered while long analyses or
 * traces run; the workers take whatever CPU is left. Elsewhere (no /proc) the thread runs as is.
 */
const WORKER_NICE = 10;
try {
  const tid = Number(readlinkSync('/proc/thread-self').split('/').pop());
  if (Number.isInteger(tid) && tid > 0) setPriority(tid, WORKER_NICE);
} catch {
  // Not Linux, or not allowed: the worker keeps the process's priority.
}

/** One task for the analysis worker: the arguments of `analyzeWindow`, sent by the pool. */
export interface AnalysisTask {
  streams: DecodedStream[];
  profile: ProcessingProfile;
  opts: AnalyzeOptions;
}

/** A decode task: an uploaded file's bytes (a copy), the decoder's options and the window limits. */
export interface DecodeTask {
  bytes: Uint8Array;
  opts: DecodeOptions;
  limits: WindowLimits;
}

/** What a decode task answers: the streams, or why the file is refused (status, code, message). */
export type DecodeOutcome =
  | { ok: true; streams: DecodedStream[] }
  | { ok: false; status: 413 | 422; code: 'too_large' | 'unprocessable'; message: string };

/**
 * A result handed back with its buffers TRANSFERRED rather than copied (piscina's Transferable
 * protocol: an object naming the value and its transferable parts, marked movable by
 * `move`; the pool's caller receives the value itself).
 */
function moved(value: object, buffers: ArrayBuffer[]): unknown {
  return move({
    get [transferableSymbol]() {
      return buffers;
    },
    get [valueSymbol]() {
      return value;
    },
  });
}

/**
 * Worker-thread entry point (piscina calls the default export): runs `analyzeWindow` on the task.
 * Errors (BandError, AnalysisError, RangeError) reject the pool's promise with the same message.
 */
export default function runAnalysisTask(task: AnalysisTask): AnalysisResult {
  return analyzeWindow(task.streams, task.profile, task.opts);
}

/**
 * An analysis followed by template matching against the station's bank (issue 19). The bank is named
 * by station and version; its templates travel only when this worker said it lacked them
 * (worker-bank.ts).
 */
export interface MatchedTask extends AnalysisTask {
  bank: BankRef;
  match: { topK: number; minValue: number };
}

/**
 * The answer to a matched task when this worker lacks some of the bank's templates: their ids, and
 * the task's streams handed back (transferred) for the retry that brings them.
 */
export interface BankMissing {
  missing: number[];
  streams: DecodedStream[];
}

/** What a matched task answers. */
export interface MatchedOutcome {
  analysis: AnalysisResult;
  matching: MatchingOutcome | null;
}

/**
 * The bank's prepared spectra, kept in this worker between windows (a template's id names immutable
 * samples), bounded at 96 MB: with 12 kB per 10 s 3-component template at 25 sps coarse rate, about
 * 8,000 templates.
 */
const prepared = new PreparedCache(96 * 1024 * 1024);

/** The station banks kept in this worker between windows (worker-bank.ts), bounded at 128 MB. */
const banks = new WorkerBankCache(128 * 1024 * 1024);

/**
 * `analyzeWindow`, then the window's template and its best matches against the bank (`matchWindow`).
 * Matching never refuses a window: when it cannot run, `matching` is null. When this worker lacks
 * some of the bank's templates, nothing is analysed: the answer is a `BankMissing` (the pool retries
 * with them).
 */
export function matched(task: MatchedTask): unknown {
  const resolved = banks.resolve(task.bank);
  if ('missing' in resolved) {
    const buffers = new Set<ArrayBuffer>();
    for (const s of task.streams) if (s.samples.buffer instanceof ArrayBuffer && s.samples.byteLength > 0) buffers.add(s.samples.buffer);
    return moved({ missing: resolved.missing, streams: task.streams } satisfies BankMissing, [...buffers]);
  }
  const analysis = analyzeWindow(task.streams, task.profile, task.opts);
  let matching: MatchingOutcome | null = null;
  try {
    matching = matchWindow(task.streams, task.profile, analysis, resolved.bank, { ...task.match, cache: prepared });
  } catch {
    matching = null;
  }
  return { analysis, matching };
}

/**
 * Decodes an uploaded file off the event loop (a 25 MB CSV or MiniSEED takes the main thread
 * nowhere), then checks the window limits before anything else sees the samples. The samples come
 * back transferred. A decoder error or a window over the limits is an answer, not a throw, so its
 * status and words survive the thread boundary.
 */
export function decode(task: DecodeTask): unknown {
  let streams: DecodedStream[];
  try {
    streams = decodeWaveform(task.bytes, task.opts);
  } catch (err) {
    if (err instanceof WaveformParseError) return { ok: false, status: 422, code: 'unprocessable', message: capMessage(err.message) } satisfies DecodeOutcome;
    throw err;
  }
  const problem = windowLimitProblem(streams, task.limits);
  if (problem !== null) return { ok: false, status: 413, code: 'too_large', message: `${task.opts.filename ? `${clipInput(task.opts.filename, MAX_QUOTED_CHARS, 12)}: ` : ''}${problem}` } satisfies DecodeOutcome;
  const buffers = new Set<ArrayBuffer>();
  for (const s of streams) if (s.samples.buffer instanceof ArrayBuffer && s.samples.byteLength === s.samples.buffer.byteLength) buffers.add(s.samples.buffer);
  return moved({ ok: true, streams } satisfies DecodeOutcome, [...buffers]);
}

/**
 * Computes a queue item's display traces (`computeTraces`, rounded for drawing by
 * `tracesForDisplay`) and answers them as JSON text in UTF-8, transferred: the main thread only
 * writes the bytes out, so neither the filtering nor the serialising of a long window holds its
 * event loop.
 */
export function traces(task: TracesInput): unknown {
  const bytes = new TextEncoder().encode(JSON.stringify(tracesForDisplay(computeTraces(task))));
  return moved(bytes, [bytes.buffer]);
}

/** The overlays of a queue item's matches (`matchOverlays`): the window's band-pass off the event loop. */
export function overlays(task: OverlayInput): unknown {
  return matchOverlays(task);
}
