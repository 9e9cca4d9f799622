import { describe, expect, it } from 'vitest';
import { decodeCsv } from '@server/formats/csv';
import { decodeWaveform } from '@server/formats/decode';
import { WaveformParseError } from '@server/formats/types';

const T0 = Date.UTC(2026, 2, 14, 9, 26, 53, 589) * 1000;

function rows(n: number, rate: number, decimals: number, f = (i: number) => i * 2 - 3): string {
  return Array.from({ length: n }, (_, i) => `${(i / rate).toFixed(decimals)},${f(i)}`).join('\n');
}

describe('CSV waveforms', () => {
  it('reads t_seconds,counts with a start and stream comment', () => {
    const text = `# stream=XX.KV01.00.HHZ start=2026-03-14T09:26:53.589Z\nt_seconds,counts\n${rows(500, 100, 2)}\n`;
    const s = decodeCsv(text);
    expect(s.id).toBe('XX.KV01.00.HHZ');
    expect(s.sampleRateHz).toBe(100);
    expect(s.startTimeUs).toBe(T0);
    expect(s.samples.length).toBe(500);
    expect(s.samples[499]).toBe(499 * 2 - 3);
    expect(s.format).toBe('csv');
  });

  it('reads ISO-8601 times with µs exactly, and the upload stream id wins', () => {
    const lines = Array.from({ length: 50 }, (_, i) => {
      const us = T0 + 123 + i * 4000; // 250 Hz
      const d = new Date(Math.floor(us / 1000)).toISOString().slice(0, 23);
      return `${d}${String(us % 1000).padStart(3, '0')}Z,${i}`;
    });
    const s = decodeCsv(`# stream=XX.KV09.00.HHZ\ntime,counts\n${lines.join('\r\n')}`, { streamId: 'XX.KV02..EHZ' });
    expect(s.id).toBe('XX.KV02..EHZ');
    expect(s.location).toBe('');
    expect(s.startTimeUs).toBe(T0 + 123);
    expect(s.sampleRateHz).toBe(250);
  });

  it('reads large relative seconds as Unix epoch seconds, without a header line', () => {
    const t0 = 1773480413.5;
    const text = Array.from({ length: 20 }, (_, i) => `${(t0 + i * 0.025).toFixed(3)},${i}`).join('\n');
    const s = decodeCsv(text, { streamId: 'XX.KV03.00.HHZ' });
    expect(s.startTimeUs).toBe(1773480413.5e6);
    expect(s.sampleRateHz).toBe(40);
  });

  it('accepts times rounded to the printed resolution (400 Hz at 3 decimals)', () => {
    const s = decodeCsv(`# start=2026-03-14T09:26:53Z\n${rows(400, 400, 3)}`, { streamId: 'XX.KV01.00.HHZ' });
    expect(s.sampleRateHz).toBe(400);
  });

  it('names the row and column of a bad cell', () => {
    const head = '# stream=XX.KV01.00.HHZ start=2026-03-14T09:26:53Z\nt_seconds,counts\n';
    expect(() => decodeCsv(`${head}0,1\n0.01,NaN\n0.02,3`)).toThrow(/line 4, column 2 \(counts\): 'NaN'/u);
    expect(() => decodeCsv(`${head}0,1\n0.01,Infinity\n`)).toThrow(/line 4, column 2/u);
    expect(() => decodeCsv(`${head}0,1\nabc,2\n`)).toThrow(/line 4, column 1 \(t_seconds\): 'abc'/u);
    expect(() => decodeCsv(`${head}0,1\n0.01,\n`)).toThrow(/line 4, column 2/u);
    expect(() => decodeCsv(`${head}0,1\n0.01,2,3\n`)).toThrow(/line 4: 3 columns/u);
  });

  it('refuses non-uniform spacing naming the row, and repeated times', () => {
    const head = '# stream=XX.KV01.00.HHZ start=2026-03-14T09:26:53Z\n';
    const gap = `${head}${rows(10, 100, 2)}\n0.11,5\n0.12,6`; // sample at 0.10 missing
    expect(() => decodeCsv(gap)).toThrow(/CSV line \d+, column 1: time .* off a uniform/u);
    // one missing sample anywhere in a long series is caught (first, middle, last interval)
    for (const missing of [1, 250, 498]) {
      const t = Array.from({ length: 500 }, (_, i) => i).filter((i) => i !== missing);
      const text = `${head}${t.map((i) => `${(i / 100).toFixed(2)},${i}`).join('\n')}`;
      expect(() => decodeCsv(text), `missing ${missing}`).toThrow(/off a uniform/u);
    }
    expect(() => decodeCsv(`${head}0,1\n0.01,2\n0.01,3`)).toThrow(/line 4, column 1: time 0.01 does not increase/u);
  });

  it('refuses a missing stream id or start time with a clear message', () => {
    expect(() => decodeCsv('# start=2026-03-14T09:26:53Z\n0,1\n0.01,2')).toThrow(/no stream id/u);
    expect(() => decodeCsv('0,1\n0.01,2', { streamId: 'XX.KV01.00.HHZ' })).toThrow(/no start time is given/u);
    expect(() => decodeCsv('0,1\n0.01,2', { streamId: 'XX.KV01.HHZ' })).toThrow(/four dot-separated parts/u);
    expect(() => decodeCsv('0,1', { streamId: 'XX.KV01.00.HHZ' })).toThrow(/at least 2/u);
  });

  it('is found by decodeWaveform and errors stay WaveformParseError', () => {
    const bytes = new TextEncoder().encode(`# start=2026-03-14T09:26:53Z\n${rows(10, 50, 2)}`);
    expect(decodeWaveform(bytes, { streamId: 'XX.KV04.00.HHZ', filename: 'kv04.csv' })[0]?.sampleRateHz).toBe(50);
    expect(() => decodeWaveform(bytes, { filename: 'kv04.csv' })).toThrow(WaveformParseError);
    expect(() => decodeWaveform(bytes, { filename: 'kv04.csv' })).toThrow(/^kv04.csv: CSV: no stream id/u);
  });

  it('reads RFC 4180 quoted cells (quoted header and values, a doubled quote, the separator inside quotes)', () => {
    // RFC 4180 §2: fields may be enclosed in double quotes; a quote inside one is doubled.
    const quoted = `# stream=XX.KV01.00.HHZ start=2026-03-14T09:26:53.589Z\n"t_seconds","counts"\n${Array.from({ length: 300 }, (_, i) => `"${(i / 100).toFixed(2)}", "${i * 2 - 3}"`).join('\n')}\n`;
    const plain = `# stream=XX.KV01.00.HHZ start=2026-03-14T09:26:53.589Z\nt_seconds,counts\n${rows(300, 100, 2)}\n`;
    const a = decodeCsv(quoted);
    const b = decodeCsv(plain);
    expect(Array.from(a.samples)).toEqual(Array.from(b.samples));
    expect([a.startTimeUs, a.sampleRateHz]).toEqual([b.startTimeUs, b.sampleRateHz]);
    // ';' separated with quoted cells holding commas in the header, and a doubled quote.
    const semi = decodeCsv(`"time, UTC";"counts ""raw"""\n${Array.from({ length: 20 }, (_, i) => `"${(i / 50).toFixed(2)}";"${i}"`).join('\n')}`, { streamId: 'XX.KV01.00.HHZ', startTimeUs: T0 });
    expect(semi.samples.length).toBe(20);
    expect(semi.sampleRateHz).toBe(50);
    expect(() => decodeCsv(`t_seconds,counts\n"0.00,1\n0.01,2`, { streamId: 'XX.KV01.00.HHZ', startTimeUs: T0 })).toThrow(/CSV line 2, column 1: a quote opens here but is not closed on this line/u);
    expect(() => decodeCsv(`t_seconds,counts\n"0.00"x,1\n0.01,2`, { streamId: 'XX.KV01.00.HHZ', startTimeUs: T0 })).toThrow(/CSV line 2, column 1: text follows the closing quote/u);
  });

  it('takes the start time of relative seconds from the upload (winning over # start=), and ignores it for ISO times', () => {
    const body = `t_seconds,counts\n${rows(100, 100, 2)}\n`;
    const given = decodeCsv(body, { streamId: 'XX.KV01.00.HHZ', startTimeUs: T0 + 5_000_000 });
    expect(given.startTimeUs).toBe(T0 + 5_000_000);
    const both = decodeCsv(`# start=2026-03-14T09:26:53.589Z\n${body}`, { streamId: 'XX.KV01.00.HHZ', startTimeUs: T0 + 5_000_000 });
    expect(both.startTimeUs).toBe(T0 + 5_000_000);
    const iso = decodeCsv(`2026-03-14T09:26:53.589Z,1\n2026-03-14T09:26:53.599Z,2\n2026-03-14T09:26:53.609Z,3`, { streamId: 'XX.KV01.00.HHZ', startTimeUs: T0 + 5_000_000 });
    expect(iso.startTimeUs).toBe(T0);
    expect(() => decodeCsv(body, { streamId: 'XX.KV01.00.HHZ' })).toThrow(/give the start time with the upload, add a comment line/u);
  });
});
