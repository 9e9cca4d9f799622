import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { z } from 'zod';
import { parseStationXml, type StationXmlChannel } from '@server/formats/stationxml';
import { groundUnit, responseAt, responseFromRegistry, responseFromSensitivity, responseFromStages, registryStages, withRegistryStages, woodAndersonFromCounts, type InstrumentResponse } from '@server/seismo/instrument-response';
import { responseFromStationXml } from '@server/features/stations/stationxml-import';
import { peakAmplitude } from '@server/seismo/wood-anderson';

const dir = join(import.meta.dirname, '..', '..', 'fixtures', 'stationxml');
const doc = parseStationXml(readFileSync(join(dir, 'multi-stage.xml'), 'utf8'));
const channels = doc.networks[0]?.stations[0]?.channels ?? [];
const channel = (code: string): StationXmlChannel => {
  const c = channels.find((x) => x.code === code);
  if (!c) throw new Error(`fixture has no ${code}`);
  return c;
};
const series = z.object({ re: z.array(z.number()), im: z.array(z.number()) });
// Reference: tests/fixtures/stationxml/make-response-fixture.py, scipy.signal.freqs_zpk on every stage
// of multi-stage.xml read with Python's own XML parser.
const ref = z
  .object({ freqsHz: z.array(z.number()), channels: z.record(z.string(), series), woodAndersonDisplacement: series })
  .parse(JSON.parse(readFileSync(join(dir, 'multi-stage-response.json'), 'utf8')));

const usable = (code: string): InstrumentResponse => {
  const r = responseFromStages(channel(code));
  if (!r.ok) throw new Error(r.reason);
  return r.response;
};

describe('StationXML stages (server/formats/stationxml.ts)', () => {
  it('reads every stage with its kind, units, gain and decimation', () => {
    const z4 = channel('HHZ').stages;
    expect(z4.map((s) => s.kind)).toEqual(['PolesZeros', 'PolesZeros', 'Coefficients', 'FIR']);
    expect(z4.map((s) => s.gain?.value)).toEqual([1500, 1, 400000, 1]);
    expect(z4[1]?.paz?.transferFunctionType).toBe('LAPLACE (HERTZ)');
    expect(z4[3]?.coefficientCounts).toEqual({ numerator: 4, denominator: 0 });
    expect(z4[3]?.decimation).toEqual({ inputSampleRateHz: 400, factor: 4 });
    expect(channel('HHZ').paz?.stage).toBe(1);
  });
});

describe('response removal checked against scipy.signal.freqs_zpk (multi-stage StationXML)', () => {
  for (const [id, want] of Object.entries(ref.channels)) {
    it(`${id}: H(f) of all stages within 1e-9 relative of scipy at ${ref.freqsHz.length} frequencies`, () => {
      const r = usable(id.split('.')[3] as string);
      ref.freqsHz.forEach((f, k) => {
        const h = responseAt(r, f);
        const wr = want.re[k] as number;
        const wi = want.im[k] as number;
        const mag = Math.hypot(wr, wi);
        expect(Math.hypot(h.re - wr, h.im - wi) / mag).toBeLessThan(1e-9);
      });
    });
  }
  it('units: m/s, nm/s (×1e-9) and m/s² (acceleration) are recognised; others are not', () => {
    expect(usable('HHZ')).toMatchObject({ quantity: 'velocity', siPerInputUnit: 1 });
    expect(usable('HHN')).toMatchObject({ quantity: 'velocity', siPerInputUnit: 1e-9 });
    expect(usable('HNE')).toMatchObject({ quantity: 'acceleration', siPerInputUnit: 1 });
    expect(groundUnit('M/S**2')).toEqual({ quantity: 'acceleration', scale: 1 });
    expect(groundUnit('nm')).toEqual({ quantity: 'displacement', scale: 1e-9 });
    expect(groundUnit('Pa')).toBeNull();
  });
  it('the same sensor in nm/s and in m/s gives the same counts per m/s', () => {
    const a = usable('HHN');
    const b = usable('HHZ');
    // HHN has no anti-alias stage: compare below 2 Hz, where that stage of HHZ is flat to 1e-6.
    for (const f of [0.1, 0.5, 1]) {
      const ha = responseAt(a, f);
      const hb = responseAt(b, f);
      expect(Math.hypot(ha.re, ha.im) / a.siPerInputUnit / Math.hypot(hb.re, hb.im)).toBeCloseTo(1, 4);
    }
  });
  it('says when a digital stage is taken as its gain, and when A0 is stated for another frequency', () => {
    expect(usable('HHZ').notes.join(' ')).toMatch(/2 digital stages taken as their gains/);
    expect(usable('HHN').notes).toEqual(['XX.KVT1.00.HHN: 1 digital stage taken as its gain (flat in the pass band)']);
    const ch = channel('HHN');
    const stage1 = ch.stages[0];
    if (!stage1?.paz) throw new Error('fixture HHN has no poles and zeros');
    const doubled = { ...ch, stages: [{ ...stage1, paz: { ...stage1.paz, normalizationFactor: 2 * stage1.paz.normalizationFactor } }, ...ch.stages.slice(1)] };
    const r = responseFromStages(doubled);
    expect(r.ok && r.response.notes.join(' ')).toMatch(/A0 .* gives \|A0·H\| = 2\.000 at 5 Hz, not 1/);
    // The gain still holds at its own frequency, so the response is unchanged.
    expect(r.ok && Math.hypot(responseAt(r.response, 1).re, responseAt(r.response, 1).im)).toBeCloseTo(Math.hypot(responseAt(usable('HHN'), 1).re, responseAt(usable('HHN'), 1).im), 6);
  });
  it('refuses with the reason: Polynomial stage, missing StageGain, a pressure unit, no poles and zeros', () => {
    const reason = (code: string): string => {
      const r = responseFromStages(channel(code));
      return r.ok ? 'usable' : r.reason;
    };
    expect(reason('LKO')).toMatch(/Polynomial stage/);
    expect(reason('HH1')).toMatch(/stage 1 has no StageGain/);
    expect(reason('BDF')).toMatch(/input unit 'Pa' is not a ground motion/);
    expect(reason('HH2')).toMatch(/no PolesZeros stage/);
    expect(responseFromStages({ id: 'XX.A.00.HHZ', stages: [] })).toMatchObject({ ok: false, reason: expect.stringMatching(/no response stages/) });
    expect(responseFromSensitivity('XX.A.00.HHZ', { zeros: [], poles: [] }, 1e9, 1, 'counts')).toMatchObject({ ok: false });
  });
});

describe('the server reads the same full response from the station registry (multi-stage StationXML)', () => {
  // What the StationXML import stores for a channel (stationxml-import.ts), through JSON as the
  // database column gives it back.
  const stored = (code: string) => {
    const ch = channel(code);
    const response: unknown = JSON.parse(JSON.stringify(withRegistryStages(responseFromStationXml(ch.paz, ch.sensitivity), ch.stages)));
    return { response, sensitivity: ch.sensitivity?.value ?? null, sensitivityFrequencyHz: ch.sensitivity?.frequencyHz ?? null, sensitivityInputUnits: ch.sensitivity?.inputUnits ?? null };
  };
  for (const [id, want] of Object.entries(ref.channels)) {
    const code = id.split('.')[3] as string;
    it(`${id}: registry → H(f) of all stages within 1e-9 relative of scipy.signal.freqs_zpk (make-response-fixture.py), as the CLI reads it`, () => {
      const r = responseFromRegistry(id, stored(code));
      if (!r.ok) throw new Error(r.reason);
      const cli = usable(code);
      expect(r.response).toMatchObject({ quantity: cli.quantity, siPerInputUnit: cli.siPerInputUnit, gain: cli.gain });
      ref.freqsHz.forEach((f, k) => {
        const h = responseAt(r.response, f);
        const wr = want.re[k] as number;
        const wi = want.im[k] as number;
        expect(Math.hypot(h.re - wr, h.im - wi) / Math.hypot(wr, wi)).toBeLessThan(1e-9);
      });
    });
  }
  it('units other than m/s are applied on the server path too: nm/s (×1e-9) and m/s² (acceleration)', () => {
    expect(responseFromRegistry('XX.KVT1.00.HHN', stored('HHN'))).toMatchObject({ ok: true, response: { quantity: 'velocity', siPerInputUnit: 1e-9 } });
    expect(responseFromRegistry('XX.KVT1.00.HNE', stored('HNE'))).toMatchObject({ ok: true, response: { quantity: 'acceleration', siPerInputUnit: 1 } });
  });
  it('refuses with the reason where the stored response cannot be used (missing StageGain, a pressure unit)', () => {
    // HH1 and BDF have no InstrumentSensitivity, so the import stores no response for them; stored stages without a gain, or from a pressure unit, are refused by name.
    expect(responseFromRegistry('XX.KVT1.00.HH1', stored('HH1'))).toMatchObject({ ok: false, reason: expect.stringMatching(/registry holds no poles and zeros/) });
    const noGain = { ...stored('HHZ'), response: { zeros: [], poles: [], stages: registryStages(channel('HH1').stages) } };
    expect(responseFromRegistry('XX.KVT1.00.HH1', noGain)).toMatchObject({ ok: false, reason: expect.stringMatching(/stage 1 has no StageGain/) });
    const pressure = { ...stored('HHZ'), response: { zeros: [], poles: [], stages: registryStages(channel('BDF').stages) } };
    expect(responseFromRegistry('XX.KVT1.00.BDF', pressure)).toMatchObject({ ok: false, reason: expect.stringMatching(/input unit 'Pa' is not a ground motion/) });
    expect(responseFromRegistry('XX.A.00.HHZ', { response: null, sensitivity: 1e9, sensitivityFrequencyHz: 1, sensitivityInputUnits: 'm/s' })).toMatchObject({ ok: false, reason: expect.stringMatching(/no poles and zeros/) });
  });
  it('a channel entered by hand (one filter and the sensitivity, no stages) is read from them, with a note', () => {
    const ch = channel('HHN');
    const row = stored('HHN');
    const byHand = { ...row, response: responseFromStationXml(ch.paz, ch.sensitivity) };
    const r = responseFromRegistry('XX.KVT1.00.HHN', byHand);
    expect(r.ok && r.response.notes.join(' ')).toMatch(/no stages/);
    // Its gain is the InstrumentSensitivity at its frequency (the one-filter form: H = S·PAZ/|PAZ(f_s)|).
    const f = ch.sensitivity?.frequencyHz ?? 1;
    expect(r.ok && Math.hypot(responseAt(r.response, f).re, responseAt(r.response, f).im)).toBeCloseTo(ch.sensitivity?.value ?? 0, -1);
  });
});

describe('counts → Wood-Anderson mm (steady-state sines against scipy’s responses)', () => {
  // A sine of ground velocity v0 at f: counts = |H(f)|·v0·sin(2πft + arg H); the Wood-Anderson trace is
  // then |H_WA,d(f)|·v0/(2πf) m (displacement = velocity / ω), both |H| from scipy (fixture).
  const fs = 100;
  const n = 60 * fs;
  for (const [code, fIndex] of [['HHZ', 5], ['HHZ', 8], ['HHN', 6], ['HNE', 7]] as const) {
    const f = ref.freqsHz[fIndex] as number;
    it(`${code} at ${f} Hz: the mid-window peak is within 0.5 % of |H_WA|·v0/(2πf)`, () => {
      const want = ref.channels[`XX.KVT1.00.${code}`] as z.infer<typeof series>;
      const h = { re: want.re[fIndex] as number, im: want.im[fIndex] as number };
      const r = usable(code);
      const v0 = 1e-6; // m/s
      const w = 2 * Math.PI * f;
      // Ground motion in the channel's stated unit: velocity, or acceleration (a = ω·v0 for the HNE case).
      const amp = (r.quantity === 'acceleration' ? v0 * w : v0) / r.siPerInputUnit;
      const counts = Float64Array.from({ length: n }, (_, i) => Math.hypot(h.re, h.im) * amp * Math.sin(w * (i / fs) + Math.atan2(h.im, h.re)));
      const wa = woodAndersonFromCounts(counts, fs, r);
      const peak = peakAmplitude(wa, fs, 20 * fs, 40 * fs);
      const hwa = Math.hypot(ref.woodAndersonDisplacement.re[fIndex] as number, ref.woodAndersonDisplacement.im[fIndex] as number);
      expect(peak.amplitude / ((hwa * v0 * 1000) / w)).toBeCloseTo(1, 2);
      expect(Math.abs(peak.amplitude / ((hwa * v0 * 1000) / w) - 1)).toBeLessThan(0.005);
    });
  }
  it('refuses bad input by name and leaves the counts untouched', () => {
    const r = usable('HHZ');
    const x = Float64Array.from({ length: 100 }, (_, i) => i % 7);
    const copy = Float64Array.from(x);
    woodAndersonFromCounts(x, 100, r);
    expect(x).toEqual(copy);
    expect(() => woodAndersonFromCounts(new Float64Array(1), 100, r)).toThrow(/at least 2 samples/);
    expect(() => woodAndersonFromCounts(Float64Array.of(1, Number.NaN, 3), 100, r)).toThrow(/sample 1 is not a finite number/);
    expect(() => woodAndersonFromCounts(x, 100, r, { f1: 1, f2: 0.5, f3: 10, f4: 20 })).toThrow(/pre-filter corners must rise/);
  });
});
