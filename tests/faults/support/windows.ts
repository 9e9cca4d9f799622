import { encodeMiniSeed2 } from '@server/formats/mseed2-writer';

/**
 * Synthetic upload files for fault tests and benchmarks (test input only, never check values):
 * one MiniSEED 2 Steim-2 file holding the three components HHZ, HHN, HHE of XX.<code>.00 at
 * 100 Hz for `durationS` seconds. The samples are deterministic pseudo-random noise (a 32-bit
 * linear congruential generator seeded from `seed`), so each (code, start, seed) gives the same
 * bytes and different starts give different files (distinct sha256, so no duplicates).
 */
export function makeWindowFile(code: string, startTimeUs: number, opts: { seed?: number; durationS?: number; rateHz?: number } = {}): Uint8Array {
  const rateHz = opts.rateHz ?? 100;
  const n = Math.round((opts.durationS ?? 120) * rateHz);
  let state = ((opts.seed ?? 1) * 2654435761 + startTimeUs) >>> 0;
  const next = () => {
    state = (Math.imul(state, 1664525) + 1013904223) >>> 0;
    return state / 2 ** 32 - 0.5;
  };
  const parts: Uint8Array[] = [];
  for (const channel of ['HHZ', 'HHN', 'HHE']) {
    const samples = new Int32Array(n);
    for (let i = 0; i < n; i++) samples[i] = Math.round(400 * next() + 150 * Math.sin((2 * Math.PI * 0.2 * i) / rateHz));
    parts.push(encodeMiniSeed2({ network: 'XX', station: code, location: '00', channel, sampleRateHz: rateHz, startTimeUs, samples }, { encoding: 'steim2', recordLength: 4096 }));
  }
  const out = new Uint8Array(parts.reduce((s, p) => s + p.length, 0));
  let o = 0;
  for (const p of parts) {
    out.set(p, o);
    o += p.length;
  }
  return out;
}
