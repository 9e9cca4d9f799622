import { describe, expect, it } from 'vitest';
import { csvFieldProblems, peekWaveformFile } from '@client/features/uploads/lib/peek-file';
import { parseIsoTimeUs } from '@server/formats/iso-time';
import { decodeWaveform } from '@server/formats/decode';
import { encodeMiniSeed2 } from '@server/formats/mseed2-writer';
import { encodeMiniSeed3 } from '@server/formats/mseed3-writer';

/**
 * The upload form asks for a CSV file's stream id and start time only when the file does not give
 * them. The reference for "what a file needs" is the server's own decoder (server/formats): for
 * each file, the form must block exactly when decodeWaveform would refuse it for a missing stream
 * id or start time, and the values the form asks for must make the server accept it.
 */

const enc = new TextEncoder();
const rows = (n: number, t: (i: number) => string): string => Array.from({ length: n }, (_, i) => `${t(i)},${(i * 7) % 23}`).join('\n');
const rel = rows(300, (i) => (i / 100).toFixed(2));
const epoch = rows(300, (i) => (1773480413.5 + i / 100).toFixed(2));
const iso = rows(300, (i) => new Date(Date.UTC(2026, 2, 14, 9, 26) + i * 10).toISOString());

const cases: { name: string; filename: string; text: string; stream: string | null; start: string | null; relative: boolean }[] = [
  { name: 'relative seconds, stream and start in the file', filename: 'a.csv', text: `# stream=XX.KV01.00.HHZ start=2026-03-14T09:26:00Z\nt_seconds,counts\n${rel}`, stream: 'XX.KV01.00.HHZ', start: '2026-03-14T09:26:00Z', relative: true },
  { name: 'relative seconds, nothing in the file', filename: 'b.csv', text: `t_seconds,counts\n${rel}`, stream: null, start: null, relative: true },
  { name: 'relative seconds, only the stream', filename: 'c.txt', text: `# stream=XX.KV01.00.HHZ\n${rel}`, stream: 'XX.KV01.00.HHZ', start: null, relative: true },
  { name: 'Unix seconds, no start needed', filename: 'd.csv', text: `# stream=XX.KV01.00.HHZ\n${epoch}`, stream: 'XX.KV01.00.HHZ', start: null, relative: false },
  { name: 'ISO times, no start needed, no stream', filename: 'e.csv', text: `time,counts\n${iso}`, stream: null, start: null, relative: false },
  { name: 'quoted cells, named .mseed', filename: 'f.mseed', text: `"t_seconds","counts"\n${rel.replace(/^([^,]+),(.*)$/gmu, '"$1","$2"')}`, stream: null, start: null, relative: true },
];

describe('upload form: what a picked file needs, against the server decoder', () => {
  for (const c of cases) {
    it(c.name, () => {
      const bytes = enc.encode(c.text);
      const peek = peekWaveformFile(bytes);
      expect(peek).toEqual({ kind: 'csv', streamId: c.stream, start: c.start, relativeTimes: c.relative });
      // With nothing typed: each field is asked for exactly when the server, given the other one,
      // refuses the file for lacking it.
      const problems = csvFieldProblems(peek, '', '');
      const refusal = (opts: { streamId?: string; startTimeUs?: number }): string => {
        try {
          decodeWaveform(bytes, { filename: c.filename, ...opts });
          return '';
        } catch (err) {
          return err instanceof Error ? err.message : String(err);
        }
      };
      expect(problems?.streamId != null, 'stream id asked for').toBe(/no stream id/u.test(refusal({ startTimeUs: 1.7e15 })));
      expect(problems?.startTime != null, 'start time asked for').toBe(/no start time is given/u.test(refusal({ streamId: 'XX.KV09.00.HHZ' })));
      // With what the form asks for typed in, the server accepts the file and uses the values.
      const streamId = problems?.streamId ? 'XX.KV02.00.HHZ' : '';
      const startTime = problems?.startTime ? '2026-03-14 10:00:00.5' : '';
      expect(csvFieldProblems(peek, streamId, startTime)).toBeNull();
      const startTimeUs = startTime ? parseIsoTimeUs(startTime) : undefined;
      const [s] = decodeWaveform(bytes, { filename: c.filename, ...(streamId ? { streamId } : {}), ...(startTimeUs !== undefined ? { startTimeUs } : {}) });
      if (streamId) expect(s?.id).toBe(streamId);
      if (startTimeUs !== undefined) expect(s?.startTimeUs).toBe(startTimeUs);
    });
  }

  it('MiniSEED 2 and 3 need no field, whatever their name; other files are left to the server', () => {
    const samples = Int32Array.from({ length: 500 }, (_, i) => i % 50);
    const ms2 = encodeMiniSeed2({ network: 'XX', station: 'KV01', location: '00', channel: 'HHZ', sampleRateHz: 100, startTimeUs: 1.7e15, samples }, { encoding: 'steim2' });
    const ms3 = encodeMiniSeed3({ network: 'XX', station: 'KV01', location: '00', channel: 'HHZ', sampleRateHz: 100, startTimeUs: 1.7e15, samples }, { encoding: 'steim2' });
    expect(peekWaveformFile(ms2)).toEqual({ kind: 'mseed' });
    expect(peekWaveformFile(ms3)).toEqual({ kind: 'mseed' });
    expect(csvFieldProblems({ kind: 'mseed' }, '', '')).toBeNull();
    expect(peekWaveformFile(Uint8Array.of(0x50, 0x4b, 3, 4, 0x14, 0))).toEqual({ kind: 'other' });
    expect(peekWaveformFile(enc.encode('<?xml version="1.0"?><FDSNStationXML/>'))).toEqual({ kind: 'other' });
    expect(peekWaveformFile(enc.encode('just some words\nno numbers here\n'))).toEqual({ kind: 'other' });
  });

  it('checks typed values: a bad stream id or start time is named', () => {
    const peek = peekWaveformFile(enc.encode(`t_seconds,counts\n${rel}`));
    expect(csvFieldProblems(peek, 'XX.KV01.HHZ', '2026-03-14T10:00:00Z')?.streamId).toMatch(/NET\.STA\.LOC\.CHA/u);
    expect(csvFieldProblems(peek, 'XX.KV01.00.HHZ', '14/03/2026 10:00')?.startTime).toMatch(/ISO-8601/u);
  });
});
