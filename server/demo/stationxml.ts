/**
 * The demo network's station metadata as FDSN StationXML 1.2 (element names of the FDSN StationXML
 * 1.2 schema): stations KV01–KV06 with their coordinates from seed-demo.ts, channels 00.HHZ/HHN/HHE
 * at 100 sps, each with its InstrumentSensitivity (1.5e9 counts per m/s at 1 Hz), a poles-and-zeros
 * stage of an invented broadband velocity sensor and a digitiser gain stage. Invented metadata.
 */
import { pazMagnitude } from '@server/dsp/response';
import { DEMO_CHANNELS, DEMO_NETWORK, DEMO_SAMPLE_RATE_HZ, DEMO_SENSITIVITY, type DemoStation } from './scenario';

/** Sensor gain of the invented sensor, V per m/s (flat band). */
export const DEMO_SENSOR_GAIN_V_PER_MS = 1500;
/** Digitiser gain, counts per V (1500 · 1e6 = 1.5e9 counts per m/s). */
export const DEMO_DIGITISER_GAIN_COUNTS_PER_V = 1e6;
/** Frequency at which the sensitivity and the normalisation hold, Hz. */
export const DEMO_NORMALIZATION_HZ = 1;

/**
 * Poles and zeros (rad/s) of the invented broadband sensor: two zeros at the origin (velocity
 * output), a 60 s corner with damping 0.707 (ω0 = 2π/60 rad/s, poles −ω0·(0.707 ± 0.707i)) and
 * three poles above 40 Hz for the high-frequency roll-off. Not any real instrument.
 */
export const DEMO_SENSOR_PAZ = {
  zeros: [
    { re: 0, im: 0 },
    { re: 0, im: 0 },
  ],
  poles: [
    { re: -0.074048, im: 0.074048 },
    { re: -0.074048, im: -0.074048 },
    { re: -350, im: 0 },
    { re: -250, im: 300 },
    { re: -250, im: -300 },
  ],
} as const;

/**
 * A0 of {@link DEMO_SENSOR_PAZ}: the factor that makes |A0 · Π(s − z)/Π(s − p)| = 1 at
 * s = 2πi · 1 Hz (SEED manual 2.4 blockette 53 convention; Laplace in rad/s).
 */
export function demoNormalizationFactor(): number {
  return 1 / pazMagnitude({ ...DEMO_SENSOR_PAZ, normalizationFactor: 1 }, DEMO_NORMALIZATION_HZ);
}

function esc(text: string): string {
  return text.replace(/&/gu, '&amp;').replace(/</gu, '&lt;').replace(/>/gu, '&gt;').replace(/"/gu, '&quot;');
}

/** Orientation of each demo channel: azimuth (° from north) and dip (° down; −90 = up). */
const ORIENTATION: Record<(typeof DEMO_CHANNELS)[number], { azimuth: number; dip: number }> = {
  HHZ: { azimuth: 0, dip: -90 },
  HHN: { azimuth: 0, dip: 0 },
  HHE: { azimuth: 90, dip: 0 },
};

/**
 * Writes the StationXML document for the given stations (deterministic text: fixed dates, numbers
 * printed by `String(number)`).
 * @param stations the demo stations (seed-demo.ts `demoStations`)
 * @returns the XML text, UTF-8, ending with a newline
 */
export function demoStationXml(stations: readonly DemoStation[]): string {
  const start = '2025-01-01T00:00:00Z';
  const a0 = demoNormalizationFactor();
  const out: string[] = [];
  out.push('<?xml version="1.0" encoding="UTF-8"?>');
  out.push('<!-- Invented demo metadata for the fictional Kestrel Valley network XX (no real stations or instruments).');
  out.push('     Written by server/demo/generate-waveforms.ts (npm run demo:generate). The poles and zeros are those of an');
  out.push('     invented broadband velocity sensor; NormalizationFactor makes |A0 H(s)| = 1 at s = 2*pi*i*1 Hz. -->');
  out.push('<FDSNStationXML xmlns="http://www.fdsn.org/xml/station/1" schemaVersion="1.2">');
  out.push('  <Source>Seisift demo</Source>');
  out.push('  <Created>2026-03-01T00:00:00Z</Created>');
  out.push(`  <Network code="${DEMO_NETWORK}" startDate="${start}">`);
  out.push('    <Description>Kestrel Valley demo network (invented)</Description>');
  for (const st of stations) {
    out.push(`    <Station code="${esc(st.code)}" startDate="${start}">`);
    out.push(`      <Latitude>${st.latitude}</Latitude>`);
    out.push(`      <Longitude>${st.longitude}</Longitude>`);
    out.push(`      <Elevation>${st.elevationM}</Elevation>`);
    out.push('      <Site>');
    out.push(`        <Name>${esc(st.name)}</Name>`);
    out.push(`        <Description>${esc(st.site)}</Description>`);
    out.push('      </Site>');
    for (const ch of DEMO_CHANNELS) {
      const o = ORIENTATION[ch];
      out.push(`      <Channel code="${ch}" locationCode="00" startDate="${start}">`);
      out.push(`        <Latitude>${st.latitude}</Latitude>`);
      out.push(`        <Longitude>${st.longitude}</Longitude>`);
      out.push(`        <Elevation>${st.elevationM}</Elevation>`);
      out.push('        <Depth>0</Depth>');
      out.push(`        <Azimuth>${o.azimuth}</Azimuth>`);
      out.push(`        <Dip>${o.dip}</Dip>`);
      out.push(`        <SampleRate>${DEMO_SAMPLE_RATE_HZ}</SampleRate>`);
      out.push('        <Response>');
      out.push('          <InstrumentSensitivity>');
      out.push(`            <Value>${DEMO_SENSITIVITY}</Value>`);
      out.push(`            <Frequency>${DEMO_NORMALIZATION_HZ}</Frequency>`);
      out.push('            <InputUnits><Name>m/s</Name><Description>Velocity in meters per second</Description></InputUnits>');
      out.push('            <OutputUnits><Name>count</Name><Description>Digital counts</Description></OutputUnits>');
      out.push('          </InstrumentSensitivity>');
      out.push('          <Stage number="1">');
      out.push('            <PolesZeros>');
      out.push('              <Description>Invented broadband velocity sensor (demo only)</Description>');
      out.push('              <InputUnits><Name>m/s</Name></InputUnits>');
      out.push('              <OutputUnits><Name>V</Name></OutputUnits>');
      out.push('              <PzTransferFunctionType>LAPLACE (RADIANS/SECOND)</PzTransferFunctionType>');
      out.push(`              <NormalizationFactor>${a0}</NormalizationFactor>`);
      out.push(`              <NormalizationFrequency>${DEMO_NORMALIZATION_HZ}</NormalizationFrequency>`);
      let k = 0;
      for (const z of DEMO_SENSOR_PAZ.zeros) out.push(`              <Zero number="${k++}"><Real>${z.re}</Real><Imaginary>${z.im}</Imaginary></Zero>`);
      for (const p of DEMO_SENSOR_PAZ.poles) out.push(`              <Pole number="${k++}"><Real>${p.re}</Real><Imaginary>${p.im}</Imaginary></Pole>`);
      out.push('            </PolesZeros>');
      out.push(`            <StageGain><Value>${DEMO_SENSOR_GAIN_V_PER_MS}</Value><Frequency>${DEMO_NORMALIZATION_HZ}</Frequency></StageGain>`);
      out.push('          </Stage>');
      out.push('          <Stage number="2">');
      out.push('            <Coefficients>');
      out.push('              <InputUnits><Name>V</Name></InputUnits>');
      out.push('              <OutputUnits><Name>count</Name></OutputUnits>');
      out.push('              <CfTransferFunctionType>DIGITAL</CfTransferFunctionType>');
      out.push('            </Coefficients>');
      out.push('            <Decimation>');
      out.push(`              <InputSampleRate>${DEMO_SAMPLE_RATE_HZ}</InputSampleRate>`);
      out.push('              <Factor>1</Factor>');
      out.push('              <Offset>0</Offset>');
      out.push('              <Delay>0</Delay>');
      out.push('              <Correction>0</Correction>');
      out.push('            </Decimation>');
      out.push(`            <StageGain><Value>${DEMO_DIGITISER_GAIN_COUNTS_PER_V}</Value><Frequency>${DEMO_NORMALIZATION_HZ}</Frequency></StageGain>`);
      out.push('          </Stage>');
      out.push('        </Response>');
      out.push('      </Channel>');
    }
    out.push('    </Station>');
  }
  out.push('  </Network>');
  out.push('</FDSNStationXML>');
  return `${out.join('\n')}\n`;
}
