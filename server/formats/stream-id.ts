import { WaveformParseError } from './types';
import { quoteInput } from '@shared/quote-input';

/** The parts of an FDSN stream id `NET.STA.LOC.CHA`. */
export interface StreamIdParts {
  network: string;
  station: string;
  location: string;
  channel: string;
}

const CODE = /^[A-Za-z0-9]{1,8}$/u;
const LOCATION = /^[A-Za-z0-9-]{0,8}$/u;

/**
 * Parses `NET.STA.LOC.CHA` (location may be empty: `XX.KV03..HHZ`). Codes are letters and digits,
 * 1–8 characters (location 0–8, may contain `-`), the lengths FDSN source identifiers allow.
 *
 * @throws WaveformParseError naming the id and the part that is wrong
 */
export function parseStreamId(id: string, from: string): StreamIdParts {
  const parts = id.trim().split('.');
  if (parts.length !== 4) {
    throw new WaveformParseError(`${from}: stream id ${quoteInput(id)} must have four dot-separated parts NET.STA.LOC.CHA`);
  }
  const [network = '', station = '', location = '', channel = ''] = parts;
  if (!CODE.test(network)) throw new WaveformParseError(`${from}: network code ${quoteInput(network)} in ${quoteInput(id)} must be 1–8 letters or digits`);
  if (!CODE.test(station)) throw new WaveformParseError(`${from}: station code ${quoteInput(station)} in ${quoteInput(id)} must be 1–8 letters or digits`);
  if (!LOCATION.test(location)) throw new WaveformParseError(`${from}: location code ${quoteInput(location)} in ${quoteInput(id)} must be 0–8 letters or digits`);
  if (!CODE.test(channel)) throw new WaveformParseError(`${from}: channel code ${quoteInput(channel)} in ${quoteInput(id)} must be 1–8 letters or digits`);
  return { network, station, location, channel };
}

/** Which code of a stream id. */
export type CodeField = 'network' | 'station' | 'location' | 'channel';

const CODE_PATTERN: Readonly<Record<CodeField, RegExp>> = { network: CODE, station: CODE, location: LOCATION, channel: CODE };

/**
 * Checks one code read from a MiniSEED header and returns it cleaned: `raw` holds the header's
 * bytes one character per byte (latin-1), as read from MiniSEED 2 fixed-header fields or from a
 * MiniSEED 3 source identifier's parts, so both formats are judged by the same rule.
 *
 * Spaces are removed wherever they stand and trailing NULs ignored, as the reference library
 * (libmseed 2.19, `ms_strncpclean`) reads the SEED 2.4 space-padded fields. What remains must be
 * printable ASCII, and then letters and digits (location also `-`), 1–8 characters (location
 * 0–8), as parseStreamId requires of an id given with a CSV upload. libmseed passes other bytes
 * through unchanged and accepts empty network and station codes; Seisift refuses both, naming the
 * bytes, because such an id can match no registered station and would print as mojibake
 * (`F0 41` shown as "ðA").
 *
 * @throws WaveformParseError naming `where`, the field and, for bytes outside printable ASCII,
 *   every byte of the field in hex
 */
export function headerCode(raw: string, field: CodeField, where: string): string {
  const text = raw.replace(/\0+$/u, '').replaceAll(' ', '');
  const hex = (s: string): string => Array.from(s, (c) => c.charCodeAt(0).toString(16).toUpperCase().padStart(2, '0')).join(' ');
  const bad = Array.from(text).filter((c) => c.charCodeAt(0) < 0x21 || c.charCodeAt(0) > 0x7e);
  if (bad.length > 0) {
    throw new WaveformParseError(
      `${where}: ${field} code holds bytes ${hex(raw.replace(/[ \0]+$/u, ''))} (hex), of which ${hex(bad.join(''))} ${bad.length === 1 ? 'is' : 'are'} not printable ASCII: codes are letters and digits`,
    );
  }
  if (text === '' && field !== 'location') {
    throw new WaveformParseError(`${where}: ${field} code is empty: a stream id needs network, station and channel codes`);
  }
  if (!CODE_PATTERN[field].test(text)) {
    throw new WaveformParseError(
      `${where}: ${field} code '${text.slice(0, 16)}' must be ${field === 'location' ? '0–8 letters, digits or -' : '1–8 letters or digits'}`,
    );
  }
  return text;
}
