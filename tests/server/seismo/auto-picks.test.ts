import { spawnSync } from 'node:child_process';
import { describe, expect, it } from 'vitest';
import { aicOnsetIndex, aicOnsetSpread } from '@server/dsp/aic-picker';
import { decodeWaveform } from '@server/formats/decode';
import { automaticPicks, onsetClass } from '@server/seismo/auto-picks';
import { defaultProcessingProfile } from '@shared/schemas/processing-profile';
import { ringStations, seededNormal } from './synthetic';
import { stationMiniSeed, syntheticEvent } from './synthetic-waveforms';

const model = { name: 'half-space (test)', layers: [{ topKm: 0, vpKmS: 6.0, vsKmS: 3.46 }] };
const stations = ringStations({ latitudeDeg: 46.25, longitudeDeg: 11.08 }, [[30, 9], [150, 21], [270, 33]]);
const truth = { latitudeDeg: 46.26, longitudeDeg: 11.07, depthKm: 6, timeS: 1_773_458_242.35 };

describe('aicOnsetSpread (Maeda 1985 AIC with Akaike weights)', () => {
  const normal = seededNormal(3);
  const x = Float64Array.from({ length: 600 }, (_, i) => normal() * (i < 347 ? 1 : 4));
  it('finds the same onset as aicOnsetIndex', () => {
    expect(aicOnsetSpread(x, 20, 580)?.index).toBe(aicOnsetIndex(x, 20, 580));
  });
  it('index and σ agree with an independent numpy implementation of the same formulas', () => {
    // numpy: AIC(k) = k ln var(x[:k]) + (N − k) ln var(x[k:]) (np.var, 1/m), w = exp(−ΔAIC/2), σ² = Σw(k − k*)²/Σw.
    const py = spawnSync(
      '/usr/bin/python3',
      [
        '-c',
        `import json,sys,numpy as np
x=np.array(json.load(sys.stdin))[20:580]; n=len(x); m=10
ks=np.arange(m,n-m+1); a=np.array([k*np.log(np.var(x[:k]))+(n-k)*np.log(np.var(x[k:])) for k in ks])
kb=ks[np.argmin(a)]; w=np.exp(-(a-a.min())/2); print(json.dumps({"index":int(20+kb),"sigma":float(np.sqrt(np.sum(w*(ks-kb)**2)/np.sum(w)))}))`,
      ],
      { input: JSON.stringify([...x]), encoding: 'utf8' },
    );
    expect(py.status, py.stderr).toBe(0);
    const ref = JSON.parse(py.stdout) as { index: number; sigma: number };
    const got = aicOnsetSpread(x, 20, 580);
    expect(got?.index).toBe(ref.index);
    expect(got?.sigmaSamples).toBeCloseTo(ref.sigma, 6);
    expect(Math.abs((got?.index ?? 0) - 347)).toBeLessThan(15);
  });
  it('is null for a constant or too short span, and refuses a span outside the trace', () => {
    expect(aicOnsetSpread(new Float64Array(100).fill(2), 0, 100)).toBeNull();
    expect(aicOnsetSpread(x, 0, 15)).toBeNull();
    expect(() => aicOnsetSpread(x, 10, 700)).toThrow(/must lie in the trace/);
  });
});

describe('automaticPicks (P on the vertical, S on the horizontals)', () => {
  const synth = syntheticEvent(stations, truth, model, 8);
  for (const st of synth) {
    it(`${st.code}: P on HHZ within 0.02 s and S on a horizontal within 0.06 s of the synthetic onsets, as automatic suggestions`, () => {
      const picks = automaticPicks(decodeWaveform(stationMiniSeed(st)), defaultProcessingProfile);
      const p = picks.find((x) => x.phase === 'P');
      const s = picks.find((x) => x.phase === 'S');
      expect(p?.streamId).toBe(`XX.${st.code}.00.HHZ`);
      expect(Math.abs(((p?.timeUs ?? 0) - st.pTimeUs) / 1e6)).toBeLessThan(0.02);
      expect(s?.streamId).toMatch(new RegExp(`^XX\\.${st.code}\\.00\\.HH[NE]$`));
      expect(Math.abs(((s?.timeUs ?? 0) - st.sTimeUs) / 1e6)).toBeLessThan(0.06);
      for (const x of picks) {
        expect(x.evaluationMode).toBe('automatic');
        expect(x.uncertaintyS).toBeGreaterThanOrEqual(x.phase === 'P' ? 0.05 : 0.1);
        expect(x.onset).toBe(onsetClass(x.uncertaintyS));
      }
      // The synthetic P starts upward (sin from 0): its first motion is positive.
      expect(p?.polarity).toBe('positive');
    });
  }
  it('no picks from noise alone, nor without a vertical', () => {
    const normal = seededNormal(4);
    const noise = Float64Array.from({ length: 6000 }, () => Math.round(30 * normal()));
    expect(automaticPicks([{ id: 'XX.N.00.HHZ', channel: 'HHZ', sampleRateHz: 100, startTimeUs: 0, samples: noise }], defaultProcessingProfile)).toEqual([]);
    const st = synth[0];
    if (!st) throw new Error('no synthetic station');
    const horizontals = decodeWaveform(stationMiniSeed(st)).filter((c) => c.channel !== 'HHZ');
    expect(automaticPicks(horizontals, defaultProcessingProfile)).toEqual([]);
  });
  it('onset classes: ≤ 0.05 s impulsive, ≤ 0.2 s emergent, else questionable', () => {
    expect([0.02, 0.05, 0.1, 0.2, 0.3].map(onsetClass)).toEqual(['impulsive', 'impulsive', 'emergent', 'emergent', 'questionable']);
  });
});
