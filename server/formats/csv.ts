import { parseIsoTimeUs } from './iso-time';
import { parseStreamId } from './stream-id';
import { WaveformParseError, type DecodedStream } from './types';
import { clipInput, quoteInput } from '@shared/quote-input';

/** Options for {@link decodeCsv}. */
export interface CsvOptions {
  /** Stream id given with the upload; wins over a `# stream=` comment. */
  streamId?: string;
  /**
   * Time of t = 0 given with the upload, µs since epoch; wins over a `# start=` comment. Used for
   * times in seconds only (ISO-8601 times carry their own date).
   */
  startTimeUs?: number;
}

/** Relative times at or above this many seconds are read as Unix epoch seconds (1e8 s = 1973-03-03). */
export const CSV_EPOCH_SECONDS_THRESHOLD = 1e8;
/** Allowed deviation of a row's time from the uniform grid, as a fraction of the sample interval. */
export const CSV_SPACING_TOLERANCE = 0.01;

const NUMBER = /^[+-]?(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?$/u;

/**
 * Decodes a two-column CSV waveform: `t_seconds,counts` or `time,counts`.
 *
 * - Lines starting with `#` are comments; `# start=ISO-8601` and `# stream=NET.STA.LOC.CHA` are read
 *   from them (several `key=value` pairs may share one comment line, separated by spaces or commas).
 * - An optional header line (first non-comment line whose first cell is not a number or a time).
 * - Column 1 either ISO-8601 UTC times (µs exact, see iso-time.ts) or seconds. Seconds are relative
 *   to the `# start=` time when one is given; without one, seconds ≥ 1e8 are read as Unix epoch
 *   seconds (what an acquisition script printing `time.time()` writes); smaller seconds without a
 *   start time are refused, because placing them at 1970 would silently mislabel the data.
 *   The stream's start time is the first row's time.
 * - Column 2: counts (or any unit), finite decimal numbers.
 * - Sample interval dt = least-squares slope of time against row index (robust to rounded
 *   printing); an integer rate (or integer period, for slow channels) within 0.1 % is used instead
 *   when every row still passes the spacing check, which is: every row within 1 % of dt plus half
 *   the last printed digit of the best-fitting uniform grid a + i·dt (at most 0.49·dt), and every
 *   interval within 1 % of dt plus one printed digit (at most 0.5·dt). So times printed with
 *   3 decimals at 400 Hz pass, and a single missing sample always fails. Failures are refused
 *   naming the row: CSV has no record structure to report gaps by.
 * - Separators: `,` (also `;` or a tab, the same throughout the file); surrounding spaces are
 *   ignored; CR LF line ends accepted. Cells may be quoted as RFC 4180 describes (`"0.01","12"`,
 *   a quote inside doubled: `""`); a quoted cell may hold the separator; it may not span lines.
 * - A start time given with the upload (`startTimeUs`) wins over `# start=`, as the upload's stream
 *   id wins over `# stream=`.
 *
 * @throws WaveformParseError naming the line (1-based) and column for every malformed cell, a
 *   missing stream id or start time, fewer than 2 samples, or non-uniform spacing
 */
export function decodeCsv(text: string, opts: CsvOptions = {}): DecodedStream {
  const lines = text.replace(/^\uFEFF/u, '').split(/\r?\n/u);
  let startUs: number | undefined;
  let commentStream: string | undefined;
  const rows: { line: number; time: string; value: string }[] = [];
  let separator: string | undefined;
  let headerSeen = false;

  for (let i = 0; i < lines.length; i++) {
    const raw = lines[i] ?? '';
    const lineNo = i + 1;
    const line = raw.trim();
    if (line === '') continue;
    if (line.startsWith('#')) {
      for (const m of line.slice(1).matchAll(/([A-Za-z_]+)\s*=\s*([^\s,;]+)/gu)) {
        const key = (m[1] ?? '').toLowerCase();
        const value = m[2] ?? '';
        if (key === 'start') {
          const t = parseIsoTimeUs(value);
          if (t === undefined) {
            throw new WaveformParseError(`CSV line ${lineNo}: start time ${quoteInput(value)} is not an ISO-8601 UTC time`);
          }
          startUs = t;
        } else if (key === 'stream') {
          commentStream = value;
        }
      }
      continue;
    }
    separator ??= detectSeparator(line);
    const cells = splitCells(line, separator, lineNo);
    if (rows.length === 0 && !headerSeen && !isTimeCell(cells[0] ?? '')) {
      headerSeen = true;
      if (cells.length !== 2) {
        throw new WaveformParseError(
          `CSV line ${lineNo}: header has ${cells.length} columns; expected two (t_seconds,counts or time,counts)`,
        );
      }
      continue;
    }
    if (cells.length !== 2) {
      throw new WaveformParseError(
        `CSV line ${lineNo}: ${cells.length} columns; expected two (time and counts) separated by '${separator === '\t' ? 'tab' : separator}'`,
      );
    }
    rows.push({ line: lineNo, time: cells[0] ?? '', value: cells[1] ?? '' });
  }

  const idText = opts.streamId ?? commentStream;
  if (idText === undefined || idText.trim() === '') {
    throw new WaveformParseError(
      'CSV: no stream id; give one with the upload or a comment line "# stream=NET.STA.LOC.CHA"',
    );
  }
  const id = parseStreamId(idText, 'CSV');
  if (rows.length < 2) {
    throw new WaveformParseError(`CSV: ${rows.length} data rows; at least 2 are needed to derive a sample rate`);
  }

  const first = rows[0];
  if (!first) throw new WaveformParseError('CSV: no data rows');
  const iso = parseIsoTimeUs(first.time) !== undefined;
  const n = rows.length;
  const timesS = new Float64Array(n); // seconds relative to the first row
  const samples = new Float64Array(n);
  let decimals = 0;
  let firstUs = 0;
  let firstRel = 0;
  for (let i = 0; i < n; i++) {
    const row = rows[i];
    if (!row) continue;
    if (iso) {
      const t = parseIsoTimeUs(row.time);
      if (t === undefined) {
        throw new WaveformParseError(`CSV line ${row.line}, column 1 (time): ${quoteInput(row.time)} is not an ISO-8601 UTC time`);
      }
      if (i === 0) firstUs = t;
      timesS[i] = (t - firstUs) / 1e6;
      const frac = /\.(\d+)/u.exec(row.time);
      decimals = Math.max(decimals, frac?.[1]?.length ?? 0);
    } else {
      if (!NUMBER.test(row.time)) {
        throw new WaveformParseError(`CSV line ${row.line}, column 1 (t_seconds): ${quoteInput(row.time)} is not a finite number`);
      }
      const t = Number(row.time);
      if (!Number.isFinite(t)) {
        throw new WaveformParseError(`CSV line ${row.line}, column 1 (t_seconds): ${quoteInput(row.time)} is not a finite number`);
      }
      if (i === 0) firstRel = t;
      timesS[i] = t - firstRel;
      const dot = row.time.replace(/[eE].*$/u, '').split('.')[1];
      decimals = Math.max(decimals, dot?.length ?? 0);
    }
    if (!NUMBER.test(row.value) || !Number.isFinite(Number(row.value))) {
      throw new WaveformParseError(`CSV line ${row.line}, column 2 (counts): ${quoteInput(row.value)} is not a finite number`);
    }
    samples[i] = Number(row.value);
    if (i > 0 && (timesS[i] ?? 0) <= (timesS[i - 1] ?? 0)) {
      throw new WaveformParseError(
        `CSV line ${row.line}, column 1: time ${clipInput(row.time)} does not increase after the previous row`,
      );
    }
  }

  if (opts.startTimeUs !== undefined) startUs = opts.startTimeUs;
  let startTimeUs: number;
  if (iso) startTimeUs = firstUs;
  else if (startUs !== undefined) startTimeUs = startUs + Math.round(firstRel * 1e6);
  else if (firstRel >= CSV_EPOCH_SECONDS_THRESHOLD) startTimeUs = Math.round(firstRel * 1e6);
  else {
    throw new WaveformParseError(
      'CSV: times are relative seconds but no start time is given; give the start time with the upload, add a comment line "# start=2026-03-14T09:26:53.589Z", or use ISO-8601 times',
    );
  }

  const sampleRateHz = deriveRate(timesS, decimals, rows.map((r) => ({ line: r.line, time: r.time })));
  return {
    id: `${id.network}.${id.station}.${id.location}.${id.channel}`,
    ...id,
    sampleRateHz,
    startTimeUs,
    samples,
    discontinuities: [],
    encoding: 'csv',
    format: 'csv',
  };
}

/** The separator of a data line: `,` when one stands outside quotes, else `;`, else a tab (else `,`). */
function detectSeparator(line: string): string {
  const outside = line.replace(/"(?:[^"]|"")*"/gu, '');
  return outside.includes(',') ? ',' : outside.includes(';') ? ';' : outside.includes('\t') ? '\t' : ',';
}

/**
 * Splits one line into trimmed cells at `separator`, honouring RFC 4180 quotes: a cell that starts
 * with `"` (after spaces) runs to the matching `"`, `""` inside stands for one quote.
 * @throws WaveformParseError naming the line and column of an unclosed quote or of text after one
 */
export function splitCells(line: string, separator: string, lineNo: number): string[] {
  const cells: string[] = [];
  let i = 0;
  for (;;) {
    while (line[i] === ' ') i++;
    let cell: string;
    if (line[i] === '"') {
      const column = cells.length + 1;
      let value = '';
      i++;
      for (;;) {
        const q = line.indexOf('"', i);
        if (q < 0) throw new WaveformParseError(`CSV line ${lineNo}, column ${column}: a quote opens here but is not closed on this line`);
        value += line.slice(i, q);
        if (line[q + 1] === '"') {
          value += '"';
          i = q + 2;
          continue;
        }
        i = q + 1;
        break;
      }
      while (line[i] === ' ' || line[i] === '\t') i++;
      if (i < line.length && !line.startsWith(separator, i)) {
        throw new WaveformParseError(`CSV line ${lineNo}, column ${column}: text follows the closing quote`);
      }
      cell = value.trim();
    } else {
      const next = line.indexOf(separator, i);
      cell = (next < 0 ? line.slice(i) : line.slice(i, next)).trim();
      i = next < 0 ? line.length : next;
    }
    cells.push(cell);
    if (i >= line.length) return cells;
    i += separator.length; // past the separator
    if (i >= line.length) {
      cells.push('');
      return cells;
    }
  }
}

/**
 * True when some line of the text (among the first 1000 non-comment lines) reads as a CSV data
 * row: at least two cells, the first a number or an ISO-8601 time, the second a number. Text
 * without one is not a CSV waveform at all (decodeWaveform then says "plain text").
 */
export function looksLikeCsvData(text: string): boolean {
  let seen = 0;
  for (const raw of text.replace(/^\uFEFF/u, '').split(/\r?\n/u)) {
    const line = raw.trim();
    if (line === '' || line.startsWith('#')) continue;
    if (++seen > 1000) break;
    let cells: string[];
    try {
      cells = splitCells(line, detectSeparator(line), 0);
    } catch {
      continue;
    }
    if (cells.length >= 2 && isTimeCell(cells[0] ?? '') && NUMBER.test(cells[1] ?? '')) return true;
  }
  return false;
}

/** True when a cell is a number or an ISO-8601 time (so a data row, not a header). */
function isTimeCell(cell: string): boolean {
  return NUMBER.test(cell) || parseIsoTimeUs(cell) !== undefined;
}

/**
 * Sample rate of uniformly spaced times (seconds from the first row), see decodeCsv: the interval
 * is the least-squares slope of time against row index (robust to times rounded when printed);
 * an integer rate, or an integer period, within 0.1 % of it is preferred when every row still fits.
 */
function deriveRate(timesS: Float64Array, decimals: number, rows: { line: number; time: string }[]): number {
  const n = timesS.length;
  const meanI = (n - 1) / 2;
  let meanT = 0;
  for (let i = 0; i < n; i++) meanT += (timesS[i] ?? 0) / n;
  let sxy = 0;
  let sxx = 0;
  for (let i = 0; i < n; i++) {
    sxy += (i - meanI) * ((timesS[i] ?? 0) - meanT);
    sxx += (i - meanI) ** 2;
  }
  const fitted = sxy / sxx;
  const halfDigit = 0.5 * 10 ** -decimals * (1 + 1e-9);
  const worst = (dt: number): { index: number; dev: number; tol: number } => {
    let a = 0;
    for (let i = 0; i < n; i++) a += ((timesS[i] ?? 0) - i * dt) / n;
    // Never wider than 0.49 of an interval, so a single missing sample is always caught.
    const tol = Math.min(0.49 * dt, CSV_SPACING_TOLERANCE * dt + halfDigit);
    let index = -1;
    let dev = 0;
    // Each interval: within 1 % plus one printed digit (two rounded times), at most half an interval.
    const tolStep = Math.min(0.5 * dt, CSV_SPACING_TOLERANCE * dt + 2 * halfDigit);
    for (let i = 1; i < n; i++) {
      const d = (timesS[i] ?? 0) - (timesS[i - 1] ?? 0) - dt;
      if (Math.abs(d) > tolStep) return { index: i, dev: d, tol: tolStep };
    }
    for (let i = 0; i < n; i++) {
      const d = (timesS[i] ?? 0) - a - i * dt;
      if (Math.abs(d) > tol && Math.abs(d) > Math.abs(dev)) {
        index = i;
        dev = d;
      }
    }
    return { index, dev, tol };
  };
  const candidates: number[] = [];
  const rate = 1 / fitted;
  if (Math.round(rate) > 0 && Math.abs(Math.round(rate) - rate) <= 1e-3 * rate) candidates.push(1 / Math.round(rate));
  if (Math.round(fitted) > 0 && Math.abs(Math.round(fitted) - fitted) <= 1e-3 * fitted) candidates.push(Math.round(fitted));
  for (const dt of candidates) if (worst(dt).index < 0) return 1 / dt;
  const w = worst(fitted);
  if (w.index >= 0) {
    const row = rows[w.index];
    throw new WaveformParseError(
      `CSV line ${row?.line ?? '?'}, column 1: time ${row?.time ?? ''} is ${(w.dev * 1e3).toFixed(3)} ms off a uniform ${rate.toPrecision(6)} Hz spacing (allowed ±${(w.tol * 1e3).toFixed(3)} ms): gap or irregular sampling`,
    );
  }
  return rate;
}
