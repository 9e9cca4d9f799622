import { isoStartTimeSchema, streamIdSchema } from '@shared/schemas/upload';

/**
 * What the upload form needs to know about a picked file before sending it, judged by content
 * (never by the file name), from its first bytes: MiniSEED (carries its own stream ids and times),
 * or CSV text, with the stream id and start time its `# stream=` / `# start=` comment lines give
 * and whether its times are seconds from the start (which then need a start time). Everything else
 * is left to the server, which names what the file is.
 *
 * The rules are the server's (server/formats/csv.ts, decode.ts), read from the same place:
 * comment lines start with `#` and hold `key=value` pairs; the first non-comment line may be a
 * header; the first data row's time is ISO-8601 (absolute), or seconds, which are absolute Unix
 * seconds from 1e8 on (CSV_EPOCH_SECONDS_THRESHOLD) and otherwise relative.
 */

/** What a file is, for the upload form. */
export type FilePeek =
  | { kind: 'mseed' }
  | {
      kind: 'csv';
      /** The file's `# stream=` value, when it has one. */
      streamId: string | null;
      /** The file's `# start=` value, when it has one. */
      start: string | null;
      /** True when the times are seconds from the start (so a start time is needed). */
      relativeTimes: boolean;
    }
  | { kind: 'other' };

/** How many bytes of a file the form reads to judge it. */
export const PEEK_BYTES = 64 * 1024;

const NUMBER = /^[+-]?(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?$/u;
const ISO = /^\d{4}-\d{2}-\d{2}[T ]\d{2}:\d{2}:\d{2}(?:\.\d{1,9})?(?:Z|[+-]\d{2}:?\d{2})?$/u;

/** MiniSEED 3 (`MS` + version 3) or a MiniSEED 2 fixed header (sequence number, quality D/R/Q/M, space). */
function looksLikeMiniSeed(b: Uint8Array): boolean {
  if (b.length >= 3 && b[0] === 0x4d && b[1] === 0x53 && b[2] === 3) return true;
  if (b.length < 8) return false;
  for (let i = 0; i < 6; i++) {
    const c = b[i] ?? -1;
    if (!((c >= 0x30 && c <= 0x39) || c === 0x20 || c === 0)) return false;
  }
  return 'DRQM'.includes(String.fromCharCode(b[6] ?? 0)) && (b[7] === 0x20 || b[7] === 0);
}

/** The first cell of a CSV line, unquoted and trimmed (separator `,`, `;` or tab). */
function firstCell(line: string): string {
  const t = line.trimStart();
  if (t.startsWith('"')) {
    const end = t.indexOf('"', 1);
    return (end < 0 ? t.slice(1) : t.slice(1, end)).trim();
  }
  return (t.split(/[,;\t]/u)[0] ?? '').trim();
}

/**
 * Judges a file from its first bytes (at most PEEK_BYTES are needed).
 * @param bytes the start of the file
 */
export function peekWaveformFile(bytes: Uint8Array): FilePeek {
  if (looksLikeMiniSeed(bytes)) return { kind: 'mseed' };
  let text: string;
  try {
    // The slice may cut a UTF-8 sequence at its end: drop a partial last line rather than fail.
    text = new TextDecoder('utf-8', { fatal: true }).decode(bytes.subarray(0, cutAtLastNewline(bytes)));
  } catch {
    return { kind: 'other' };
  }
  if (/^\s*[<{[]/u.test(text.replace(/^\uFEFF/u, ''))) return { kind: 'other' };
  let streamId: string | null = null;
  let start: string | null = null;
  let firstTime: string | null = null;
  for (const raw of text.replace(/^\uFEFF/u, '').split(/\r?\n/u)) {
    const line = raw.trim();
    if (line === '') continue;
    if (line.startsWith('#')) {
      for (const m of line.slice(1).matchAll(/([A-Za-z_]+)\s*=\s*([^\s,;]+)/gu)) {
        const key = (m[1] ?? '').toLowerCase();
        if (key === 'stream') streamId = m[2] ?? null;
        else if (key === 'start') start = m[2] ?? null;
      }
      continue;
    }
    const cell = firstCell(line);
    if (NUMBER.test(cell) || ISO.test(cell)) {
      firstTime = cell;
      break;
    }
    // Otherwise a header line: read on.
  }
  if (firstTime === null) return { kind: 'other' };
  // Seconds are relative to a start when the file gives one, else when below 1e8 (else Unix seconds).
  const relativeTimes = NUMBER.test(firstTime) && (start !== null || Number(firstTime) < 1e8);
  return { kind: 'csv', streamId, start, relativeTimes };
}

/** Length of `bytes` up to and including its last LF (all of it when it has none or is short). */
function cutAtLastNewline(bytes: Uint8Array): number {
  if (bytes.length < PEEK_BYTES) return bytes.length;
  const at = bytes.lastIndexOf(0x0a);
  return at < 0 ? bytes.length : at + 1;
}

/** What is missing or wrong in a CSV file's fields, per field; null when the file can be sent. */
export type CsvFieldProblems = { streamId: string | null; startTime: string | null } | null;

/**
 * The fields a CSV file still needs: a stream id unless the file names one (`# stream=`), a start
 * time when its times are seconds from the start and it gives none (`# start=`); typed values
 * must be valid (they win over the file's lines, as on the server). Files that are not CSV by
 * content (MiniSEED, or what the server will name) need nothing; a file still being read (`null`)
 * needs nothing yet.
 */
export function csvFieldProblems(peek: FilePeek | null, streamIdText: string, startTimeText: string): CsvFieldProblems {
  if (peek?.kind !== 'csv') return null;
  let streamId: string | null = null;
  if (streamIdText.trim() !== '') {
    const parsed = streamIdSchema.safeParse(streamIdText);
    if (!parsed.success) streamId = parsed.error.issues[0]?.message ?? 'invalid stream id';
  } else if (peek.streamId === null) streamId = 'This CSV file names no stream: give its stream id, e.g. XX.KV01.00.HHZ';
  let startTime: string | null = null;
  if (startTimeText.trim() !== '') {
    const parsed = isoStartTimeSchema.safeParse(startTimeText);
    if (!parsed.success) startTime = parsed.error.issues[0]?.message ?? 'invalid start time';
  } else if (peek.relativeTimes && peek.start === null) startTime = 'Its times are seconds from the start: give the start time (UTC), e.g. 2026-03-14T09:26:00Z';
  return streamId || startTime ? { streamId, startTime } : null;
}
