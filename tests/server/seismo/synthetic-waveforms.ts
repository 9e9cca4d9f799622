/**
 * Synthetic three-component windows of a known hypocentre for the event-chain tests: P and S first
 * arrivals from the travel-time engine, seeded noise (never Math.random), a P wavelet on the vertical
 * and a steady 2 Hz S wave train on the horizontals whose ground velocity is known, so the
 * Wood-Anderson amplitude and the ML follow from published constants. Counts = velocity × the
 * sensitivity of a broadband sensor whose response is flat to 1e-9 at 1–10 Hz (corner 0.01 Hz).
 */
import { encodeMiniSeed2 } from '@server/formats/mseed2-writer';
import { greatCircleDistanceKm } from '@server/seismo/geodesy';
import type { LocateStation } from '@server/seismo/locate';
import { firstArrivalTimeS, prepareVelocityModel } from '@server/seismo/travel-time';
import type { VelocityModel } from '@server/seismo/velocity-model';
import { seededNormal, type TrueHypocentre } from './synthetic';

/** Sensitivity of the synthetic channels, counts per m/s (1500 V per m/s × 1e6 counts per V). */
export const SYNTH_SENSITIVITY = 1.5e9;
/** Frequency of the S wave train, Hz. */
export const S_FREQUENCY_HZ = 2;

/** One station's synthetic window. */
export interface SyntheticStation {
  code: string;
  pTimeUs: number;
  sTimeUs: number;
  hypocentralKm: number;
  channels: { channel: 'HHZ' | 'HHN' | 'HHE'; startTimeUs: number; counts: Int32Array }[];
}

/** Ground velocity peak of the S train at a station, m/s: 2e-5 × (10 km / r) (geometric spreading; invented). */
export function sVelocityMS(hypocentralKm: number): number {
  return 2e-5 * (10 / hypocentralKm);
}

/**
 * Windows of `durationS` (default 60) s at 100 sps starting 10 s before the origin (whole seconds) at every station.
 * Z: noise (σ 2e-8 m/s) + P wavelet 3e-6·sin(2π·6 Hz·τ)·e^(−τ/0.4 s) from the P time.
 * N, E: noise + 0.3 × that P wavelet + from the S time a 2 Hz sine of amplitude `sVelocityMS(r)` with a
 * 0.25 s cosine rise, 3 s flat, 1 s cosine fall (cos phase on E).
 */
export function syntheticEvent(stations: readonly LocateStation[], truth: TrueHypocentre, model: VelocityModel, seed = 5, durationS = 60): SyntheticStation[] {
  const m = prepareVelocityModel(model);
  const fs = 100;
  const n = durationS * fs;
  const startUs = Math.floor(truth.timeS - 10) * 1e6;
  const noise = seededNormal(seed);
  return stations.map((s) => {
    const d = greatCircleDistanceKm(truth, s);
    const tp = truth.timeS + firstArrivalTimeS(m, 'P', d, truth.depthKm);
    const ts = truth.timeS + firstArrivalTimeS(m, 'S', d, truth.depthKm);
    const r = Math.hypot(d, truth.depthKm);
    const aS = sVelocityMS(r);
    const pWave = (t: number): number => (t < tp ? 0 : 3e-6 * Math.sin(2 * Math.PI * 6 * (t - tp)) * Math.exp(-(t - tp) / 0.4));
    const sEnvelope = (t: number): number => {
      const tau = t - ts;
      if (tau < 0 || tau > 4.25) return 0;
      if (tau < 0.25) return 0.5 * (1 - Math.cos((Math.PI * tau) / 0.25));
      if (tau < 3.25) return 1;
      return 0.5 * (1 + Math.cos((Math.PI * (tau - 3.25)) / 1));
    };
    const make = (comp: 'HHZ' | 'HHN' | 'HHE'): Int32Array =>
      Int32Array.from({ length: n }, (_, i) => {
        const t = startUs / 1e6 + i / fs;
        let v = 2e-8 * noise();
        if (comp === 'HHZ') v += pWave(t);
        else {
          v += 0.3 * pWave(t);
          const phase = 2 * Math.PI * S_FREQUENCY_HZ * (t - ts);
          v += aS * sEnvelope(t) * (comp === 'HHN' ? Math.sin(phase) : Math.cos(phase) * (t >= ts ? 1 : 0));
        }
        return Math.round(v * SYNTH_SENSITIVITY);
      });
    return {
      code: s.code,
      pTimeUs: Math.round(tp * 1e6),
      sTimeUs: Math.round(ts * 1e6),
      hypocentralKm: r,
      channels: (['HHZ', 'HHN', 'HHE'] as const).map((c) => ({ channel: c, startTimeUs: startUs, counts: make(c) })),
    };
  });
}

/** One MiniSEED 2 file (Steim-2) holding a station's three channels, network XX, location 00. */
export function stationMiniSeed(st: SyntheticStation): Uint8Array {
  const parts = st.channels.map((c) =>
    encodeMiniSeed2({ network: 'XX', station: st.code, location: '00', channel: c.channel, sampleRateHz: 100, startTimeUs: c.startTimeUs, samples: c.counts }, { encoding: 'steim2', recordLength: 4096 }),
  );
  const out = new Uint8Array(parts.reduce((a, p) => a + p.length, 0));
  let at = 0;
  for (const p of parts) {
    out.set(p, at);
    at += p.length;
  }
  return out;
}

/**
 * StationXML 1.2 for the stations (network XX): each channel a broadband velocity sensor (two zeros at
 * 0, poles −0.0444 ± 0.0444i rad/s: a 0.01 Hz corner, damping 0.707; A0 normalised at 1 Hz), stage
 * gain 1500 V per m/s, then a digitiser stage of 1e6 counts per V. Invented metadata.
 */
export function syntheticStationXml(stations: readonly LocateStation[], inputUnits = 'm/s', sensorGain = 1500): string {
  const w = 2 * Math.PI;
  const p = 0.0444;
  // |(iw)² / ((iw − p1)(iw − p2))| at 1 Hz, p1,2 = −p ± pi.
  const mag = (w * w) / (Math.hypot(p, w - p) * Math.hypot(p, w + p));
  const a0 = 1 / mag;
  const ch = (code: string, lat: number, lon: number): string => `      <Channel code="${code}" locationCode="00" startDate="2020-01-01T00:00:00Z">
        <Latitude>${lat}</Latitude><Longitude>${lon}</Longitude><Elevation>500</Elevation><Depth>0</Depth><SampleRate>100</SampleRate>
        <Response>
          <InstrumentSensitivity><Value>${sensorGain * 1e6}</Value><Frequency>1</Frequency><InputUnits><Name>${inputUnits}</Name></InputUnits><OutputUnits><Name>count</Name></OutputUnits></InstrumentSensitivity>
          <Stage number="1">
            <PolesZeros>
              <InputUnits><Name>${inputUnits}</Name></InputUnits><OutputUnits><Name>V</Name></OutputUnits>
              <PzTransferFunctionType>LAPLACE (RADIANS/SECOND)</PzTransferFunctionType>
              <NormalizationFactor>${a0}</NormalizationFactor><NormalizationFrequency>1</NormalizationFrequency>
              <Zero number="0"><Real>0</Real><Imaginary>0</Imaginary></Zero><Zero number="1"><Real>0</Real><Imaginary>0</Imaginary></Zero>
              <Pole number="2"><Real>${-p}</Real><Imaginary>${p}</Imaginary></Pole><Pole number="3"><Real>${-p}</Real><Imaginary>${-p}</Imaginary></Pole>
            </PolesZeros>
            <StageGain><Value>${sensorGain}</Value><Frequency>1</Frequency></StageGain>
          </Stage>
          <Stage number="2">
            <Coefficients><InputUnits><Name>V</Name></InputUnits><OutputUnits><Name>count</Name></OutputUnits><CfTransferFunctionType>DIGITAL</CfTransferFunctionType></Coefficients>
            <StageGain><Value>1000000</Value><Frequency>1</Frequency></StageGain>
          </Stage>
        </Response>
      </Channel>`;
  const body = stations
    .map(
      (s) => `    <Station code="${s.code}" startDate="2020-01-01T00:00:00Z">
      <Latitude>${s.latitudeDeg}</Latitude><Longitude>${s.longitudeDeg}</Longitude><Elevation>500</Elevation>
      <Site><Name>Synthetic ${s.code}</Name></Site>
${['HHZ', 'HHN', 'HHE'].map((c) => ch(c, s.latitudeDeg, s.longitudeDeg)).join('\n')}
    </Station>`,
    )
    .join('\n');
  return `<?xml version="1.0" encoding="UTF-8"?>
<FDSNStationXML xmlns="http://www.fdsn.org/xml/station/1" schemaVersion="1.2">
  <Source>Seisift tests (invented)</Source>
  <Network code="XX" startDate="2020-01-01T00:00:00Z">
${body}
  </Network>
</FDSNStationXML>
`;
}
