import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { z } from 'zod';
import { runLocateCli } from '@server/cli/locate';
import { formatIsoTimeUs } from '@server/formats/iso-time';
import { greatCircleDistanceKm } from '@server/seismo/geodesy';
import { firstArrivalTimeS, prepareVelocityModel } from '@server/seismo/travel-time';
import { ringStations, type TrueHypocentre } from '@tests/server/seismo/synthetic';
import { S_FREQUENCY_HZ, sVelocityMS, stationMiniSeed, syntheticEvent, syntheticStationXml } from '@tests/server/seismo/synthetic-waveforms';

const dir = mkdtempSync(join(tmpdir(), 'seisift-locate-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

const model = { name: 'two layers (test)', layers: [{ topKm: 0, vpKmS: 6.0, vsKmS: 3.46 }, { topKm: 30, vpKmS: 8.0, vsKmS: 4.62 }] };
const centre = { latitudeDeg: 46.25, longitudeDeg: 11.08 };
const stations = ringStations(centre, [[10, 12], [75, 25], [140, 18], [200, 30], [260, 15], [320, 22]]);
const truth: TrueHypocentre = { latitudeDeg: 46.27, longitudeDeg: 11.05, depthKm: 8, timeS: 1_773_458_242.35 };
const synth = syntheticEvent(stations, truth, model);

const stationXml = join(dir, 'stations.xml');
writeFileSync(stationXml, syntheticStationXml(stations));
const modelFile = join(dir, 'model.json');
writeFileSync(modelFile, JSON.stringify(model));
const files = synth.map((s) => {
  const f = join(dir, `${s.code}.mseed`);
  writeFileSync(f, stationMiniSeed(s));
  return f;
});

// The output contract.
const contract = z.object({
  origin: z.object({
    time: z.string().regex(/^\d{4}-\d\d-\d\dT\d\d:\d\d:\d\d\.\d{3}Z$/),
    latitude: z.number(),
    longitude: z.number(),
    depthKm: z.number(),
    depthFixed: z.boolean(),
    uncertainty: z.object({ horizontalKm68: z.number(), ellipse: z.object({ semiMajorKm: z.number(), semiMinorKm: z.number(), azimuthDeg: z.number() }), depthKm: z.number().nullable(), timeS: z.number() }),
    rmsS: z.number(),
    azimuthalGapDeg: z.number(),
    minimumDistanceKm: z.number(),
    usedPhases: z.number().int(),
    usedStations: z.number().int(),
  }),
  arrivals: z.array(z.object({ streamId: z.string(), phase: z.enum(['P', 'S']), time: z.string(), residualS: z.number(), distanceKm: z.number(), azimuthDeg: z.number(), weight: z.number() })),
  magnitude: z.object({ type: z.literal('ML'), value: z.number(), uncertainty: z.number().nullable(), stationCount: z.number().int(), method: z.string() }).nullable(),
  stationMagnitudes: z.array(z.object({ streamId: z.string(), value: z.number(), amplitudeMm: z.number(), periodS: z.number().nullable(), distanceKm: z.number() })),
  notes: z.array(z.string()),
});

const originTimeS = (iso: string): number => Date.parse(iso) / 1000;

/**
 * Expected station ML from outside the code: the Wood-Anderson displacement magnification of a
 * second-order seismometer |H| = G ω² / √((ω₀² − ω²)² + (2hω₀ω)²) with T₀ 0.8 s, h 0.7, G 2080
 * (Uhrhammer & Collins 1990), ground displacement v/ω of the 2 Hz train, and
 * ML = log10 A + 1.110 log10(r/100) + 0.00189 (r − 100) + 3.0 (Hutton & Boore 1987).
 */
function expectedMl(r: number): number {
  const w = 2 * Math.PI * S_FREQUENCY_HZ;
  const w0 = (2 * Math.PI) / 0.8;
  const mag = (2080 * w * w) / Math.hypot(w0 * w0 - w * w, 2 * 0.7 * w0 * w);
  const aMm = ((mag * sVelocityMS(r)) / w) * 1000;
  return Math.log10(aMm) + 1.11 * Math.log10(r / 100) + 0.00189 * (r - 100) + 3.0;
}

describe('npm run -s locate (server/cli/locate.ts)', () => {
  it('with PICKS.json of noise-free first arrivals: the hypocentre within 0.1 km and the time within 0.01 s', () => {
    const m = prepareVelocityModel(model);
    const picks = stations.flatMap((s) => {
      const d = greatCircleDistanceKm(truth, s);
      const t = (ph: 'P' | 'S'): string => formatIsoTimeUs(Math.round((truth.timeS + firstArrivalTimeS(m, ph, d, truth.depthKm)) * 1e6));
      return [
        { streamId: `XX.${s.code}.00.HHZ`, phase: 'P', time: t('P'), uncertaintyS: 0.05 },
        { streamId: `XX.${s.code}.00.HHN`, phase: 'S', time: t('S'), uncertaintyS: 0.1 },
      ];
    });
    const picksFile = join(dir, 'picks.json');
    writeFileSync(picksFile, JSON.stringify(picks));
    const out = runLocateCli(['--stationxml', stationXml, '--model', modelFile, '--picks', picksFile, ...files, '--json']);
    expect(out.stderr).toBe('');
    expect(out.code).toBe(0);
    const rep = contract.parse(JSON.parse(out.stdout));
    expect(greatCircleDistanceKm({ latitudeDeg: rep.origin.latitude, longitudeDeg: rep.origin.longitude }, truth)).toBeLessThan(0.1);
    expect(Math.abs(rep.origin.depthKm - truth.depthKm)).toBeLessThan(0.1);
    expect(Math.abs(originTimeS(rep.origin.time) - truth.timeS)).toBeLessThan(0.01);
    expect(rep.origin.usedPhases).toBe(12);
    expect(rep.arrivals.every((a) => Math.abs(a.residualS) < 0.005)).toBe(true);
    expect(rep.notes.join(' ')).not.toMatch(/automatic pick/);
    expect(rep.notes.join(' ')).toMatch(/triage aids/);
  });

  it('without picks: automatic P and S picks locate within 1 km, and ML matches Wood-Anderson + Hutton & Boore within 0.05', () => {
    const out = runLocateCli(['--stationxml', stationXml, '--model', modelFile, ...files, '--json']);
    expect(out.stderr).toBe('');
    expect(out.code).toBe(0);
    const rep = contract.parse(JSON.parse(out.stdout));
    expect(rep.notes[0] ?? '').toMatch(/12 automatic picks \(suggestions/);
    expect(greatCircleDistanceKm({ latitudeDeg: rep.origin.latitude, longitudeDeg: rep.origin.longitude }, truth)).toBeLessThan(1);
    expect(Math.abs(originTimeS(rep.origin.time) - truth.timeS)).toBeLessThan(0.1);
    expect(rep.arrivals.filter((a) => a.phase === 'P').every((a) => a.streamId.endsWith('HHZ'))).toBe(true);
    expect(rep.arrivals.filter((a) => a.phase === 'S').every((a) => /HH[NE]$/.test(a.streamId))).toBe(true);
    expect(rep.magnitude?.stationCount).toBe(6);
    for (const sm of rep.stationMagnitudes) {
      const st = synth.find((s) => sm.streamId.startsWith(`XX.${s.code}.`));
      expect(st).toBeDefined();
      expect(Math.abs(sm.value - expectedMl(st?.hypocentralKm ?? NaN))).toBeLessThan(0.05);
      expect(sm.periodS).toBeCloseTo(1 / S_FREQUENCY_HZ, 1);
    }
    const mls = synth.map((s) => expectedMl(s.hypocentralKm)).sort((a, b) => a - b);
    expect(Math.abs((rep.magnitude?.value ?? NaN) - (mls[2]! + mls[3]!) / 2)).toBeLessThan(0.05);
  });

  it('a response in nm/s gives the same ML as the same response in m/s', () => {
    const nmXml = join(dir, 'stations-nm.xml');
    writeFileSync(nmXml, syntheticStationXml(stations, 'nm/s', 1500e-9));
    const a = contract.parse(JSON.parse(runLocateCli(['--stationxml', stationXml, '--model', modelFile, ...files, '--json']).stdout));
    const b = contract.parse(JSON.parse(runLocateCli(['--stationxml', nmXml, '--model', modelFile, ...files, '--json']).stdout));
    expect(b.magnitude?.value).toBeCloseTo(a.magnitude?.value ?? NaN, 6);
  });

  it('exit 2 on a file it cannot decode, naming it', () => {
    const bad = join(dir, 'bad.mseed');
    writeFileSync(bad, 'hello, not a waveform\n');
    const out = runLocateCli(['--stationxml', stationXml, ...files.slice(0, 3), bad, '--json']);
    expect(out.code).toBe(2);
    expect(out.stderr).toMatch(/cannot decode .*bad\.mseed/);
    expect(out.stdout).toBe('');
  });

  it('exit 3 when it cannot locate: fewer than 3 stations, the reason on stderr', () => {
    const out = runLocateCli(['--stationxml', stationXml, '--model', modelFile, ...files.slice(0, 2), '--json']);
    expect(out.code).toBe(3);
    expect(out.stderr).toMatch(/cannot locate: a location needs picks from at least 3 stations; there are 2/);
    expect(out.stdout).toBe('');
  });

  it('exit 1 on usage, a bad model, bad picks or a pick on a station the StationXML lacks', () => {
    expect(runLocateCli([...files]).code).toBe(1);
    expect(runLocateCli(['--stationxml', stationXml]).stderr).toMatch(/at least one FILE/);
    const badModel = join(dir, 'bad-model.json');
    writeFileSync(badModel, JSON.stringify({ name: 'x', layers: [{ topKm: 0, vpKmS: 3, vsKmS: 4 }] }));
    const m = runLocateCli(['--stationxml', stationXml, '--model', badModel, ...files]);
    expect(m.code).toBe(1);
    expect(m.stderr).toMatch(/Vs 4 km\/s must be below Vp 3 km\/s/);
    const badPicks = join(dir, 'bad-picks.json');
    writeFileSync(badPicks, JSON.stringify([{ streamId: 'XX.T01.00.HHZ', phase: 'Q', time: '2026-03-14T00:00:00Z', uncertaintyS: 0.1 }]));
    expect(runLocateCli(['--stationxml', stationXml, '--picks', badPicks, ...files]).stderr).toMatch(/picks .*0\.phase/);
    const stranger = join(dir, 'stranger.json');
    writeFileSync(stranger, JSON.stringify([{ streamId: 'XX.ZZ9.00.HHZ', phase: 'P', time: '2026-03-14T00:00:00Z', uncertaintyS: 0.1 }]));
    expect(runLocateCli(['--stationxml', stationXml, '--picks', stranger, ...files]).stderr).toMatch(/XX\.ZZ9\.00\.HHZ: its station is not in the StationXML/);
  });

  it('prints a readable report without --json', () => {
    const out = runLocateCli(['--stationxml', stationXml, '--model', modelFile, ...files]);
    expect(out.code).toBe(0);
    expect(out.stdout).toMatch(/^origin \d{4}-/);
    expect(out.stdout).toMatch(/68 % ellipse/);
    expect(out.stdout).toMatch(/ML \d\.\d/);
    expect(out.stdout).toMatch(/triage aids/);
  });
});
