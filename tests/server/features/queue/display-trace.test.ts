import { execFileSync } from 'node:child_process';
import { describe, expect, it } from 'vitest';
import { tracesQuerySchema } from '@shared/schemas/queue';
import { processingProfileSchema } from '@shared/schemas/processing-profile';
import { encodeSamples } from '@server/db/samples-codec';
import { butterworthSos } from '@server/dsp/butterworth';
import { sosfiltZeroPhase } from '@server/dsp/sosfilt';
import { computeTraces, registryResponse, type TracesInput } from '@server/features/queue/queue-traces';
import { groundMotionFromCounts, responseAbs, responseFromSensitivity } from '@server/seismo/instrument-response';

/**
 * The review screen's display trace (units and band on the fly): the causal and zero-phase band
 * against scipy.signal (Debian python3-scipy), the response removal against the definition of the
 * transfer function (a sinusoid of f Hz in counts is A/|H(f)| of ground motion, common practice), and
 * the refusals in words where the response cannot be used.
 */

const fs = 100;
const n = 6000;
/** Test input: a 3 Hz and a 20 Hz sinusoid plus a slow ramp, in counts (invented, not a check value). */
const x = Float64Array.from({ length: n }, (_, i) => 4000 * Math.sin((2 * Math.PI * 3 * i) / fs) + 1500 * Math.sin((2 * Math.PI * 20 * i) / fs) + 0.5 * i);
// A 1 Hz velocity sensor: two zeros at 0, two poles at −4.443 ± 4.443i rad/s, 6.29e8 counts per m/s
// at 1 Hz (the shape of a short-period seismometer's response; values from memory).
const paz = { zeros: [{ re: 0, im: 0 }, { re: 0, im: 0 }], poles: [{ re: -4.443, im: 4.443 }, { re: -4.443, im: -4.443 }], normalizationFactor: 1, sensitivity: 6.29e8, sensitivityFrequencyHz: 1 };

function input(query: Record<string, string>, registered: 'paz' | 'flat' | 'none'): TracesInput {
  const streamId = 'XX.KV01.00.HHZ';
  const ch = registered === 'paz' ? { sensitivity: 6.29e8, sensitivityFrequencyHz: 1, sensitivityInputUnits: 'm/s', response: paz } : registered === 'flat' ? { sensitivity: 6.29e8, sensitivityFrequencyHz: 1, sensitivityInputUnits: 'm/s', response: null } : undefined;
  return {
    channels: [{ streamId, sampleRateHz: fs, startTimeUs: Date.UTC(2026, 2, 14) * 1000, sampleCount: n, samples: encodeSamples(x) }],
    profile: null,
    sensitivities: registered === 'none' ? {} : { [streamId]: 6.29e8 },
    responses: { [streamId]: registryResponse(streamId, ch) },
    query: tracesQuerySchema.parse({ points: String(2 * n), ...query }),
  };
}

/** scipy.signal's band-pass of the counts, detrended and tapered as the engine does (Tukey α 0.1). */
function scipyBand(fmin: number, fmax: number, zeroPhase: boolean): number[] {
  const script = `
import sys, json, numpy as np
from scipy import signal
x = np.array(json.load(sys.stdin))
x = signal.detrend(x, type='linear') * signal.windows.tukey(len(x), 0.1)
sos = signal.butter(4, [${fmin}, ${fmax}], 'bandpass', fs=${fs}, output='sos')
y = signal.sosfilt(sos, x) if ${zeroPhase ? 'False' : 'True'} else signal.sosfilt(sos, signal.sosfilt(sos, x)[::-1])[::-1]
print(json.dumps(y.tolist()))`;
  return JSON.parse(execFileSync('/usr/bin/python3', ['-c', script], { input: JSON.stringify(Array.from(x)), maxBuffer: 64 << 20 }).toString()) as number[];
}

describe('display trace of the review screen', () => {
  it('a causal 1–5 Hz band in counts equals scipy.signal.sosfilt of butter(4, [1, 5]) on the pre-processed trace', () => {
    const ch = computeTraces(input({ units: 'counts', fmin: '1', fmax: '5' }, 'paz')).channels[0];
    const ref = scipyBand(1, 5, false);
    expect(ch?.display?.values).toHaveLength(n);
    const peak = Math.max(...ref.map(Math.abs));
    for (let i = 0; i < n; i += 7) expect(Math.abs((ch?.display?.values[i] ?? NaN) - (ref[i] as number))).toBeLessThan(1e-6 * peak);
    expect(ch?.display?.chain).toMatch(/Butterworth band-pass 1–5 Hz, order 4, causal/);
    expect(ch?.display?.unit).toBe('counts');
  });

  it('zero-phase is forward-backward from zero state (scipy sosfilt twice, reversed), and says display only', () => {
    const ch = computeTraces(input({ units: 'counts', fmin: '1', fmax: '5', phase: 'zero-phase' }, 'paz')).channels[0];
    const ref = scipyBand(1, 5, true);
    const peak = Math.max(...ref.map(Math.abs));
    for (let i = 0; i < n; i += 7) expect(Math.abs((ch?.display?.values[i] ?? NaN) - (ref[i] as number))).toBeLessThan(1e-6 * peak);
    expect(ch?.display?.chain).toMatch(/zero-phase \(forward-backward, display only\)/);
  });

  it('velocity from the poles and zeros: a 3 Hz sinusoid of A counts is A/|H(3 Hz)| m/s mid-window', () => {
    const resp = responseFromSensitivity('t', paz, 6.29e8, 1, 'm/s');
    if (!resp.ok) throw new Error(resp.reason);
    const pure = Float64Array.from({ length: n }, (_, i) => 4000 * Math.sin((2 * Math.PI * 3 * i) / fs));
    const v = groundMotionFromCounts(pure, fs, resp.response, 'velocity');
    let peak = 0;
    for (let i = 2000; i < 4000; i++) peak = Math.max(peak, Math.abs(v[i] as number));
    // Within 2 %: the detrend of a finite sinusoid and the DFT's leakage off its bin move the peak a little.
    expect(Math.abs(peak / (4000 / responseAbs(resp.response, 3)) - 1)).toBeLessThan(0.02);
    // Displacement of a sinusoid: velocity ÷ 2πf (V = iω·D). Both through the same 1–10 Hz band first:
    // the taper's slow transient, ÷ ω, would otherwise dominate the displacement below 1 Hz.
    const sos = butterworthSos(4, [1, 10], 'bandpass', fs);
    const d = sosfiltZeroPhase(sos, groundMotionFromCounts(pure, fs, resp.response, 'displacement'));
    const vb = sosfiltZeroPhase(sos, v);
    let dPeak = 0;
    let vPeak = 0;
    for (let i = 2000; i < 4000; i++) {
      dPeak = Math.max(dPeak, Math.abs(d[i] as number));
      vPeak = Math.max(vPeak, Math.abs(vb[i] as number));
    }
    expect(Math.abs(dPeak / (vPeak / (2 * Math.PI * 3)) - 1)).toBeLessThan(0.02);
    const shown = computeTraces(input({ units: 'velocity' }, 'paz')).channels[0];
    expect(shown?.display?.unit).toBe('m/s');
    expect(shown?.display?.chain).toMatch(/response removed \(poles and zeros/);
  });

  it('refuses displacement and Wood-Anderson without poles and zeros, naming why; velocity falls back to the flat sensitivity and says so', () => {
    const flat = computeTraces(input({ units: 'displacement' }, 'flat')).channels[0];
    expect(flat?.display).toBeNull();
    expect(flat?.displayRefused).toMatch(/displacement needs the instrument response: XX\.KV01\.00\.HHZ: the registry holds no poles and zeros \(only a flat sensitivity\)/);
    const wa = computeTraces(input({ units: 'wood-anderson' }, 'none')).channels[0];
    expect(wa?.displayRefused).toMatch(/Wood-Anderson needs the instrument response: XX\.KV01\.00\.HHZ is not registered/);
    const vel = computeTraces(input({ units: 'velocity' }, 'flat')).channels[0];
    expect(vel?.display?.chain).toMatch(/flat sensitivity 6\.290e\+8/);
  });

  it('a band at or above 0.45·fs is refused on the channel; a half-given or upside-down band is a 400 at the edge', () => {
    const ch = computeTraces(input({ fmin: '10', fmax: '46' }, 'paz')).channels[0];
    expect(ch?.display).toBeNull();
    expect(ch?.displayRefused).toMatch(/display band 10–46 Hz reaches 0\.45·fs = 45 Hz/);
    expect(tracesQuerySchema.safeParse({ fmin: '1' }).success).toBe(false);
    expect(tracesQuerySchema.safeParse({ fmin: '5', fmax: '1' }).success).toBe(false);
    // The engine's own bands are untouched by a display request.
    const plain = computeTraces(input({}, 'paz')).channels[0];
    const asked = computeTraces(input({ fmin: '1', fmax: '5' }, 'paz')).channels[0];
    expect(asked?.high).toEqual(plain?.high);
    expect(asked?.low).toEqual(plain?.low);
    expect(plain?.display).toBeUndefined();
    expect(processingProfileSchema.parse({}).bands.order).toBe(4);
  });
});
