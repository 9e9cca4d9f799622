import { WaveformParseError } from './types';
import { quoteInput } from '../../shared/quote-input';

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
