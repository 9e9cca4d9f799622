import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { parseStationXml, StationXmlParseError, type PolesZeros } from '@server/formats/stationxml';

const XML = readFileSync(join(import.meta.dirname, '../../fixtures/stationxml/xx-kestrel-valley.xml'), 'utf8');

/** |A0 · Π(s − z) / Π(s − p)| at the normalization frequency (SEED manual 2.4, blockette 53). */
function normalizedGain(paz: PolesZeros): number {
  const f = paz.normalizationFrequencyHz;
  const w = paz.transferFunctionType === 'LAPLACE (HERTZ)' ? f : 2 * Math.PI * f; // s = i·f or i·2πf
  let re = paz.normalizationFactor;
  let im = 0;
  const mul = (a: number, b: number): void => {
    [re, im] = [re * a - im * b, re * b + im * a];
  };
  const div = (a: number, b: number): void => {
    const d = a * a + b * b;
    [re, im] = [(re * a + im * b) / d, (im * a - re * b) / d];
  };
  for (const z of paz.zeros) mul(-z.re, w - z.im);
  for (const p of paz.poles) div(-p.re, w - p.im);
  return Math.hypot(re, im);
}

describe('parseStationXml (FDSN StationXML 1.2 element names)', () => {
  const doc = parseStationXml(XML);

  it('reads networks, stations and channel epochs', () => {
    expect(doc.schemaVersion).toBe('1.2');
    expect(doc.networks.map((n) => n.code)).toEqual(['XX']);
    const [kv01, kv04] = doc.networks[0]?.stations ?? [];
    expect(kv01?.code).toBe('KV01');
    expect(kv01?.siteName).toBe('Kestrel Valley north ridge');
    expect(kv01?.latitude).toBe(46.5123);
    expect(kv01?.longitude).toBe(-112.3456);
    expect(kv01?.elevationM).toBe(1432.5);
    expect(kv01?.startTimeUs).toBe(Date.UTC(2025, 0, 1) * 1000);
    expect(kv01?.channels.map((c) => c.id)).toEqual(['XX.KV01.00.HHZ', 'XX.KV01.00.HHN']);
    expect(kv01?.channels[1]?.endDate).toBe('2026-01-01T00:00:00Z');
    expect(kv01?.channels[1]?.sensitivity).toBeUndefined();
    expect(kv04?.channels[0]?.id).toBe('XX.KV04..EHZ');
    expect(kv04?.channels[0]?.sampleRateHz).toBe(200);
  });

  it('reads the sensitivity and the poles-and-zeros stage as written', () => {
    const hhz = doc.networks[0]?.stations[0]?.channels[0];
    expect(hhz?.azimuthDeg).toBe(0);
    expect(hhz?.dipDeg).toBe(-90);
    expect(hhz?.sampleRateHz).toBe(100);
    expect(hhz?.sensitivity).toEqual({ value: 1.2016e9, frequencyHz: 1, inputUnits: 'm/s', outputUnits: 'count' });
    expect(hhz?.paz).toEqual({
      stage: 1,
      transferFunctionType: 'LAPLACE (RADIANS/SECOND)',
      normalizationFactor: 30155227.875467602,
      normalizationFrequencyHz: 1,
      zeros: [
        { re: 0, im: 0 },
        { re: 0, im: 0 },
      ],
      poles: [
        { re: -0.037, im: 0.037 },
        { re: -0.037, im: -0.037 },
        { re: -220, im: 0 },
        { re: -235, im: 286 },
        { re: -235, im: -286 },
      ],
      inputUnits: 'm/s',
      outputUnits: 'V',
      stageGain: { value: 1500, frequencyHz: 1 },
    });
  });

  it('gives poles and zeros that the normalization factor normalizes to 1 (SEED 2.4 blockette 53)', () => {
    // A0 in the fixture was computed with numpy (see the file's comment); a swapped real/imaginary
    // part or a wrong unit convention (rad/s vs Hz) would break this.
    const hhz = doc.networks[0]?.stations[0]?.channels[0]?.paz;
    const ehz = doc.networks[0]?.stations[1]?.channels[0]?.paz;
    if (!hhz || !ehz) throw new Error('missing paz');
    expect(ehz.transferFunctionType).toBe('LAPLACE (HERTZ)');
    expect(Math.abs(normalizedGain(hhz) - 1)).toBeLessThan(1e-12);
    expect(Math.abs(normalizedGain(ehz) - 1)).toBeLessThan(1e-12);
  });

  it('refuses malformed XML, another root, and missing required elements, naming the path', () => {
    expect(() => parseStationXml('<FDSNStationXML><Network></FDSNStationXML>')).toThrow(/not well-formed XML.*line 1/u);
    expect(() => parseStationXml('<?xml version="1.0"?><quakeml/>')).toThrow(/root element is <quakeml>/u);
    expect(() => parseStationXml(XML.replace('<Latitude>46.5123</Latitude>', ''))).toThrow(
      /Network XX \/ Station KV01: <Latitude> is missing/u,
    );
    expect(() => parseStationXml(XML.replace('<Value>1.2016E9</Value>', '<Value>lots</Value>'))).toThrow(
      /Channel 00.HHZ \/ Response \/ InstrumentSensitivity: <Value> 'lots' is not a finite number/u,
    );
    expect(() => parseStationXml(XML.replace('>LAPLACE (HERTZ)<', '>LAPLACE (FURLONGS)<'))).toThrow(/PzTransferFunctionType> 'LAPLACE \(FURLONGS\)'/u);
    expect(() => parseStationXml(XML.replace('<Real>-220.0</Real>', ''))).toThrow(/Pole 4: <Real> is missing/u);
    expect(() => parseStationXml(XML.replace('<Dip>-90</Dip>', '<Dip>-120</Dip>'))).toThrow(/<Dip> -120 is outside/u);
    expect(() => parseStationXml(XML.replace('schemaVersion="1.2"', 'schemaVersion="2.0"'))).toThrow(StationXmlParseError);
  });
});

describe('parseStationXml on mutated documents (fast-check)', () => {
  it('only ever throws StationXmlParseError', () => {
    fc.assert(
      fc.property(
        fc.array(fc.tuple(fc.nat(), fc.nat(40), fc.string({ maxLength: 12 })), { minLength: 1, maxLength: 4 }),
        (edits) => {
          let text = XML;
          for (const [at, del, insert] of edits) {
            const p = at % (text.length + 1);
            text = text.slice(0, p) + insert + text.slice(p + del);
          }
          try {
            const doc = parseStationXml(text);
            expect(doc.networks.length).toBeGreaterThan(0);
          } catch (err) {
            if (!(err instanceof StationXmlParseError)) throw err;
          }
        },
      ),
      { numRuns: 300, seed: 7 },
    );
  });
});
