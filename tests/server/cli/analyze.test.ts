import { spawnSync } from 'node:child_process';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { z } from 'zod';
import { PLACEHOLDER_STREAM_ID, runAnalyzeCli } from '@server/cli/analyze';
import { analyzeWindow } from '@server/dsp/pipeline';
import { decodeWaveform } from '@server/formats/decode';
import { encodeMiniSeed2 } from '@server/formats/mseed2-writer';
import { defaultProcessingProfile } from '@shared/schemas/processing-profile';
import { makeSignal } from '@tests/server/dsp/fixture-signal';

const dir = mkdtempSync(join(tmpdir(), 'seisift-cli-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

const spec = { n: 9000, fs: 100, sines: [[20, 0.3, 0]] as [number, number, number][], bursts: [[50, 5, 800, 5]] as [number, number, number, number][], noise: 100, seed: 11 };
const counts = Float64Array.from(makeSignal(spec), Math.round);

function csv(withId: boolean): string {
  const lines = [...(withId ? ['# stream=XX.KV02.00.HHZ'] : []), '# start=2026-03-14T09:26:53.589Z'];
  counts.forEach((v, i) => lines.push(`${(i / 100).toFixed(2)},${v}`));
  return `${lines.join('\n')}\n`;
}

const contract = z.object({
  channels: z.array(
    z.object({
      id: z.string(),
      sampleRate: z.number(),
      startTime: z.string().regex(/^\d{4}-\d\d-\d\dT\d\d:\d\d:\d\d\.\d{3}Z$/),
      samples: z.number(),
      qc: z.array(z.object({ code: z.string(), severity: z.enum(['info', 'warning', 'error']), message: z.string() })),
      bands: z.object({ low: z.object({ fmin: z.number(), fmax: z.number(), energy: z.number() }), high: z.object({ fmin: z.number(), fmax: z.number(), energy: z.number() }) }),
      ratio: z.number().nullable(),
      log10Ratio: z.number().nullable(),
      staLta: z.object({ peak: z.number(), peakTime: z.number(), triggers: z.array(z.object({ on: z.number(), off: z.number().nullable() })) }),
      snr: z.number().nullable(),
      psd: z.object({ freqs: z.array(z.number()), values: z.array(z.number()) }),
      dominantFrequency: z.number().nullable(),
      spectralCentroid: z.number().nullable(),
    }),
  ),
  score: z.number(),
  flag: z.enum(['likely event', 'likely noise', 'needs eyes']),
  reasons: z.array(z.string()),
});

describe('npm run analyze (server/cli/analyze.ts)', () => {
  it('--json prints one object of the contract, equal to analyzeWindow on the decoded file', () => {
    const file = join(dir, 'kv02.csv');
    writeFileSync(file, csv(true));
    const out = runAnalyzeCli([file, '--json']);
    expect(out.code).toBe(0);
    const parsed = contract.parse(JSON.parse(out.stdout));
    expect(parsed.channels[0]?.id).toBe('XX.KV02.00.HHZ');
    const direct = analyzeWindow(decodeWaveform(new TextEncoder().encode(csv(true)), { filename: 'kv02.csv' }), defaultProcessingProfile);
    expect(JSON.parse(out.stdout)).toEqual(JSON.parse(JSON.stringify(direct)));
  });

  it('prints a table with the flag, the reasons and the review notice', () => {
    const file = join(dir, 'kv02.csv');
    writeFileSync(file, csv(true));
    const out = runAnalyzeCli([file]);
    expect(out.code).toBe(0);
    expect(out.stdout).toMatch(/^stream\s+sps\s+samples/);
    expect(out.stdout).toMatch(/XX\.KV02\.00\.HHZ\s+100\s+9000\s+2026-03-14T09:26:53\.589Z/);
    expect(out.stdout).toMatch(/flag: (likely event|likely noise|needs eyes)/);
    expect(out.stdout).toMatch(/Automatic scores need an analyst's review/);
  });

  it('a CSV without a stream id takes --stream, or a placeholder with a note', () => {
    const file = join(dir, 'noid.csv');
    writeFileSync(file, csv(false));
    const named = runAnalyzeCli([file, '--json', '--stream', 'XX.KV05.00.EHZ']);
    expect(contract.parse(JSON.parse(named.stdout)).channels[0]?.id).toBe('XX.KV05.00.EHZ');
    const anon = runAnalyzeCli([file, '--json']);
    expect(contract.parse(JSON.parse(anon.stdout)).channels[0]?.id).toBe(PLACEHOLDER_STREAM_ID);
    expect(anon.stderr).toMatch(/placeholder/);
  });

  it('--sensitivity gives physical units; --profile is validated with the shared schema', () => {
    const file = join(dir, 'kv02.csv');
    writeFileSync(file, csv(true));
    const phys = JSON.parse(runAnalyzeCli([file, '--json', '--sensitivity', '6.0e8']).stdout);
    const raw = JSON.parse(runAnalyzeCli([file, '--json']).stdout);
    expect(phys.channels[0].units).toBe('m/s');
    expect(phys.channels[0].bands.high.energy * 3.6e17).toBeCloseTo(raw.channels[0].bands.high.energy, 6);
    expect(runAnalyzeCli([file, '--sensitivity', 'abc']).stderr).toMatch(/--sensitivity must be a positive number/);
    const prof = join(dir, 'profile.json');
    writeFileSync(prof, JSON.stringify({ bands: { high: { fmin: 3, fmax: 12 } } }));
    expect(JSON.parse(runAnalyzeCli([file, '--json', '--profile', prof]).stdout).channels[0].bands.high).toMatchObject({ fmin: 3, fmax: 12 });
    writeFileSync(prof, JSON.stringify({ bands: { high: { fmin: 12, fmax: 3 } } }));
    const bad = runAnalyzeCli([file, '--profile', prof]);
    expect(bad.code).toBe(1);
    expect(bad.stderr).toMatch(/bands\.high: fmin must be lower than fmax/);
  });

  it('MiniSEED with several channels of one station: all analysed in file order; the strongest trigger decides and the reasons name it', () => {
    const parts = ['HHZ', 'HHN', 'HHE'].map((channel, i) =>
      encodeMiniSeed2(
        { network: 'XX', station: 'KV03', location: '00', channel, sampleRateHz: 100, startTimeUs: Date.UTC(2026, 2, 14) * 1000, samples: Int32Array.from(makeSignal({ ...spec, seed: 20 + i }), Math.round) },
        { encoding: 'steim2', recordLength: 512 },
      ),
    );
    const bytes = new Uint8Array(parts.reduce((n, p) => n + p.length, 0));
    let o = 0;
    for (const p of parts) {
      bytes.set(p, o);
      o += p.length;
    }
    const file = join(dir, 'kv03.mseed');
    writeFileSync(file, bytes);
    const raw = JSON.parse(runAnalyzeCli([file, '--json']).stdout) as { leadChannel: string };
    const r = contract.parse(raw);
    expect(r.channels.map((c) => c.id)).toEqual(['XX.KV03.00.HHZ', 'XX.KV03.00.HHN', 'XX.KV03.00.HHE']);
    // The deciding channel is the one whose STA/LTA peaks highest (server/dsp/score.ts, rule 1).
    const strongest = r.channels.reduce((a, b) => (b.staLta.peak > a.staLta.peak ? b : a));
    expect(raw.leadChannel).toBe(strongest.id);
    const named = r.reasons.join(' | ');
    expect(named).toContain(`STA/LTA peak ${(Math.round(strongest.staLta.peak * 10) / 10).toFixed(1)} on ${strongest.id}`);
    // The same burst on all three with different noise (seeds 20–22): the north component peaks highest,
    // so it decides over the vertical, and the first reason says so with the vertical's peak.
    expect(strongest.id).toBe('XX.KV03.00.HHN');
    const vPeak = (Math.round((r.channels[0]?.staLta.peak ?? NaN) * 10) / 10).toFixed(1);
    expect(r.reasons[0]).toBe(`XX.KV03.00.HHN decides: its STA/LTA peak is the window's highest (the vertical XX.KV03.00.HHZ peaks at ${vPeak})`);
    for (const c of r.channels.filter((c) => c.id !== strongest.id)) expect(named).toContain(`beside it, ${c.id}:`);
  });

  it('a file with two stations asks for --stream, which picks one station (libmseed fixture tests/fixtures/mseed/multi-stream.mseed)', () => {
    const file = join(import.meta.dirname, '../../fixtures/mseed/multi-stream.mseed');
    const both = runAnalyzeCli([file, '--json']);
    expect(both.code).toBe(1);
    expect(both.stderr).toMatch(/holds 2 stations \(XX\.KV01, XX\.KV02\): choose one with --stream/);
    const one = runAnalyzeCli([file, '--json', '--stream', 'XX.KV02.00.HHZ']);
    expect(one.code).toBe(0);
    expect(contract.parse(JSON.parse(one.stdout)).channels.map((c) => c.id)).toEqual(['XX.KV02.00.HHZ']);
    expect(runAnalyzeCli([file, '--stream', 'XX.KV09.00.HHZ']).stderr).toMatch(/stream XX\.KV09\.00\.HHZ is not in/);
  });

  it('an undecodable file exits 2 with the reason on stderr (the real script, spawned)', () => {
    const file = join(dir, 'junk.bin');
    writeFileSync(file, Uint8Array.from([0, 1, 2, 3, 200, 201]));
    const res = spawnSync(process.execPath, ['--import', 'tsx', 'server/cli/analyze.ts', file], { encoding: 'utf8' });
    expect(res.status).toBe(2);
    expect(res.stderr).toMatch(/cannot decode .*junk\.bin: unrecognised (binary )?format/);
    expect(res.stdout).toBe('');
    expect(runAnalyzeCli([join(dir, 'missing.csv')]).code).toBe(2);
    expect(runAnalyzeCli([]).code).toBe(1);
  });
});
