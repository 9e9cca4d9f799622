import { looksLikeMiniSeed2 } from './mseed2';
import { looksLikeMiniSeed3 } from './mseed3';

/**
 * What a file is, judged by its content alone (never by its name), so that a refusal can say so
 * in plain words ("this is a ZIP archive …") instead of a generic "unrecognised format".
 *
 * Signatures ("magic numbers") are the ones each format's specification puts at the start of a
 * file (common practice): ZIP `PK\x03\x04` (also `PK\x05\x06` empty, `PK\x07\x08` spanned), gzip
 * 1F 8B, bzip2 `BZh1`…`BZh9` + 31 41 59 26 53 59, xz FD `7zXZ` 00, Zstandard 28 B5 2F FD, 7z
 * `7z` BC AF 27 1C, POSIX tar `ustar` at byte 257, PDF `%PDF-`, PNG, JPEG FF D8 FF, GIF, HDF5,
 * UTF-16 byte-order marks; a SEED volume's first record is a control header (sequence number,
 * type V/A/S/T: SEED manual 2.4, chapter 8).
 */
export type FileKind =
  | { kind: 'mseed3' }
  | { kind: 'mseed2' }
  | { kind: 'text'; text: string }
  | { kind: 'refused'; message: string };

const ascii = (bytes: Uint8Array, at: number, s: string): boolean => {
  for (let i = 0; i < s.length; i++) if (bytes[at + i] !== s.charCodeAt(i)) return false;
  return true;
};
const starts = (bytes: Uint8Array, sig: readonly number[]): boolean => sig.every((b, i) => bytes[i] === b);

const ARCHIVE_ADVICE = 'unpack it and upload the MiniSEED or CSV files inside';
const COMPRESSED_ADVICE = 'decompress it and upload the file inside';

/** Binary formats we can name, with what to do about them. */
const SIGNATURES: readonly { test: (b: Uint8Array) => boolean; message: string }[] = [
  { test: (b) => starts(b, [0x50, 0x4b, 0x03, 0x04]) || starts(b, [0x50, 0x4b, 0x05, 0x06]) || starts(b, [0x50, 0x4b, 0x07, 0x08]), message: `this is a ZIP archive, not a waveform file: ${ARCHIVE_ADVICE}` },
  { test: (b) => starts(b, [0x1f, 0x8b]), message: `this is gzip-compressed data, not a waveform file: ${COMPRESSED_ADVICE}` },
  { test: (b) => ascii(b, 0, 'BZh') && (b[3] ?? 0) >= 0x31 && (b[3] ?? 0) <= 0x39 && starts(b.subarray(4), [0x31, 0x41, 0x59, 0x26, 0x53, 0x59]), message: `this is bzip2-compressed data, not a waveform file: ${COMPRESSED_ADVICE}` },
  { test: (b) => starts(b, [0xfd, 0x37, 0x7a, 0x58, 0x5a, 0x00]), message: `this is xz-compressed data, not a waveform file: ${COMPRESSED_ADVICE}` },
  { test: (b) => starts(b, [0x28, 0xb5, 0x2f, 0xfd]), message: `this is Zstandard-compressed data, not a waveform file: ${COMPRESSED_ADVICE}` },
  { test: (b) => starts(b, [0x37, 0x7a, 0xbc, 0xaf, 0x27, 0x1c]), message: `this is a 7z archive, not a waveform file: ${ARCHIVE_ADVICE}` },
  { test: (b) => ascii(b, 257, 'ustar'), message: `this is a tar archive, not a waveform file: ${ARCHIVE_ADVICE}` },
  { test: (b) => ascii(b, 0, '%PDF-'), message: 'this is a PDF document, not a waveform file' },
  { test: (b) => starts(b, [0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a]), message: 'this is a PNG image, not a waveform file' },
  { test: (b) => starts(b, [0xff, 0xd8, 0xff]), message: 'this is a JPEG image, not a waveform file' },
  { test: (b) => ascii(b, 0, 'GIF87a') || ascii(b, 0, 'GIF89a'), message: 'this is a GIF image, not a waveform file' },
  { test: (b) => starts(b, [0x89, 0x48, 0x44, 0x46, 0x0d, 0x0a, 0x1a, 0x0a]), message: 'this is an HDF5 file, not MiniSEED or CSV: export the waveform as MiniSEED first' },
  { test: (b) => starts(b, [0xff, 0xfe]) || starts(b, [0xfe, 0xff]), message: 'this is UTF-16 text: save it as UTF-8 (plain CSV) and upload it again' },
];

/**
 * True when the first bytes are a SEED control header: a 6-character sequence number of digits
 * or spaces, a record type V (volume), A (abbreviation), S (station) or T (time span) and a space
 * or `*` (continuation), SEED manual 2.4 chapter 8.
 */
function looksLikeSeedControlHeader(bytes: Uint8Array): boolean {
  if (bytes.byteLength < 8) return false;
  for (let i = 0; i < 6; i++) {
    const c = bytes[i] ?? -1;
    if (!((c >= 0x30 && c <= 0x39) || c === 0x20)) return false;
  }
  return 'VAST'.includes(String.fromCharCode(bytes[6] ?? 0)) && (bytes[7] === 0x20 || bytes[7] === 0x2a);
}

/**
 * The bytes as UTF-8 text, or undefined when they are not UTF-8; `control` is the first control
 * character other than tab, CR, LF (with its byte offset), which a CSV file must not hold.
 */
function asText(bytes: Uint8Array): { text: string; control?: { code: number; at: number } } | undefined {
  let text: string;
  try {
    text = new TextDecoder('utf-8', { fatal: true }).decode(bytes);
  } catch {
    return undefined;
  }
  // eslint-disable-next-line no-control-regex
  const m = /[\u0000-\u0008\u000B\u000C\u000E-\u001F\u007F]/u.exec(text);
  if (!m) return { text };
  const code = m[0].charCodeAt(0);
  return { text, control: { code, at: new TextEncoder().encode(text.slice(0, m.index)).byteLength } };
}

/** True when at least 95 % of the first 4096 bytes are printable ASCII, tab, CR, LF or UTF-8 (≥ 0x80). */
function mostlyPrintable(bytes: Uint8Array): boolean {
  const head = bytes.subarray(0, 4096);
  let ok = 0;
  for (const b of head) if ((b >= 0x20 && b !== 0x7f) || b === 0x09 || b === 0x0a || b === 0x0d) ok++;
  return ok >= 0.95 * head.byteLength;
}

/** Hex of the first `n` bytes, e.g. `50 4b 03 04`. */
export function firstBytesHex(bytes: Uint8Array, n = 8): string {
  return Array.from(bytes.subarray(0, n), (b) => b.toString(16).padStart(2, '0')).join(' ');
}

/**
 * Sorts a file by content: MiniSEED 3 (`MS` + version 3), MiniSEED 2 (fixed-header test, see
 * looksLikeMiniSeed2), text (UTF-8 without control characters, for the CSV decoder or a named
 * refusal, see describeText), or a refusal naming what it is. Never looks at the file name.
 */
export function sniffFile(bytes: Uint8Array): FileKind {
  if (bytes.byteLength === 0) return { kind: 'refused', message: 'empty file' };
  if (looksLikeMiniSeed3(bytes)) return { kind: 'mseed3' };
  if (looksLikeMiniSeed2(bytes)) return { kind: 'mseed2' };
  for (const s of SIGNATURES) if (s.test(bytes)) return { kind: 'refused', message: s.message };
  if (looksLikeSeedControlHeader(bytes)) {
    return {
      kind: 'refused',
      message: 'this is a full SEED volume (it starts with a control header), not data-only MiniSEED: extract its data records as MiniSEED and upload those',
    };
  }
  if (bytes.every((b) => b === 0)) return { kind: 'refused', message: `the file holds only zero bytes (${bytes.byteLength} bytes)` };
  const text = asText(bytes);
  if (text?.control && mostlyPrintable(bytes)) {
    const { code, at } = text.control;
    return {
      kind: 'refused',
      message: `this is text with a control character (byte ${code.toString(16).padStart(2, '0')} hex at byte ${at}), not a clean CSV file: only tab, CR and LF may appear besides printable text`,
    };
  }
  if (text !== undefined && !text.control) return { kind: 'text', text: text.text };
  return {
    kind: 'refused',
    message: `unrecognised binary format: not MiniSEED 2, MiniSEED 3 or CSV text, nor an archive, image or document Seisift can name (first bytes ${firstBytesHex(bytes)})`,
  };
}

/** At most this many characters of the file are quoted in a message. */
const QUOTE_CHARS = 60;

/** `text` shortened to QUOTE_CHARS characters, in double quotes, for messages. */
export function quoteStart(text: string): string {
  const line = text.replace(/\s+/gu, ' ').trim();
  return JSON.stringify(line.length > QUOTE_CHARS ? `${line.slice(0, QUOTE_CHARS)}…` : line);
}

/**
 * Names text that is not a CSV waveform: XML (StationXML, QuakeML, HTML or any root element) or
 * JSON. Returns undefined for anything else (the CSV decoder then judges it).
 */
export function describeNonCsvText(text: string): string | undefined {
  const t = text.replace(/^\uFEFF/u, '').trimStart();
  if (t.startsWith('<')) {
    // Skip the XML declaration, comments, processing instructions and a DOCTYPE to the root element.
    const body = t.replace(/^(?:<\?[\s\S]*?\?>\s*|<!--[\s\S]*?-->\s*|<!DOCTYPE[^>]*>\s*)*/iu, '');
    const root = /^<([A-Za-z_][\w.:-]*)/u.exec(body)?.[1] ?? '';
    const local = root.includes(':') ? root.slice(root.indexOf(':') + 1) : root;
    if (/^html$/iu.test(local) || /^<!DOCTYPE\s+html/iu.test(t)) return 'this is an HTML page, not a waveform file';
    if (local === 'FDSNStationXML') return 'this is XML: StationXML station metadata, not a waveform: import it on the Stations page instead';
    if (local.toLowerCase() === 'quakeml') return 'this is XML: a QuakeML event catalogue, not a waveform file';
    return root ? `this is XML (root element <${root.slice(0, 40)}>), not a waveform file: Seisift reads MiniSEED 2, MiniSEED 3 and CSV` : 'this is XML or markup, not a waveform file';
  }
  if (t.startsWith('{') || t.startsWith('[')) {
    try {
      JSON.parse(t);
      return 'this is JSON, not a waveform file: Seisift reads MiniSEED 2, MiniSEED 3 and CSV (t_seconds,counts)';
    } catch {
      return undefined;
    }
  }
  return undefined;
}
