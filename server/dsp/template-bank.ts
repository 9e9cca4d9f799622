import { fftPlan, nextPowerOfTwo } from './xcorr';

/**
 * Matching one window against a station's bank of templates (hundreds to thousands) with the
 * normalised multichannel cross-correlation of xcorr.ts, fast enough to run on every ingest.
 *
 * Two passes:
 * 1. Coarse, in the frequency domain (overlap-save, fft.js): the band-passed traces and templates are
 *    taken every k-th sample, k = ⌊fs / (2.5·f_max)⌋ (≥ 1; f_max the band's upper edge, so the
 *    coarse rate keeps ≥ 2.5 samples per period of the band's fastest energy and the products w·x,
 *    below 2·f_max, do not alias onto 0 Hz; the band-pass is the anti-alias filter). Each block of B
 *    coarse samples (B the power of two ≥ 4·M', M' the coarse template length) is transformed once per
 *    component; each template's spectra are prepared once and may be kept between windows
 *    (`PreparedCache`). Per template and block, the components' products X·conj(W) are summed over
 *    the band's bins only, and one inverse FFT of the next power of two Q above their count gives the
 *    ANALYTIC correlation moved to 0 Hz (negative frequencies dropped), sampled every B/Q coarse lags;
 *    its magnitude is the correlation's envelope. Templates are ranked by their largest normalised
 *    envelope: unlike the correlation itself, sampled every k samples, the envelope's peak does not
 *    drop when the true peak falls between coarse lags (for a narrow-band 8 Hz burst at k = 4 the
 *    sampled correlation can lose half its peak; the envelope, as smooth as the band is narrow,
 *    loses little).
 * 2. Exact, in the time domain: for the best-ranked templates (`refine`), C is computed by its
 *    definition at full rate over every lag within k·(2 + ⌈B/2Q⌉) + ⌈fs / (2·f_min)⌉ samples of the
 *    envelope peak (the correlation's largest cycle lies within half a period of the band's lowest frequency
 *    of it). Every value and lag this function returns comes from this pass, at the full rate: the
 *    number `normalizedXcorr` (and scipy) give at that lag.
 */

/** A stored template as the matcher takes it. */
export interface BankTemplate {
  id: number;
  sampleRateHz: number;
  /** Stream ids of its components, in the order of `samples`. */
  ids: readonly string[];
  /** Band-passed, unit joint energy (any scale works: C is normalised). */
  samples: ReadonlyArray<ArrayLike<number>>;
}

/** One match of the window with a template (full-rate, exact). */
export interface BankMatch {
  templateId: number;
  /** Normalised multichannel C at `lag`, in [−1, 1]. */
  value: number;
  /** Sample of the window (full rate, from its sample 0) where the template's first sample lies. */
  lag: number;
  /** C of each matched component alone at that lag, in the template's component order (null: absent). */
  perChannel: Array<number | null>;
}

/** Options of `matchBank`. */
export interface MatchBankOptions {
  /** The band's upper edge, Hz (sets the coarse step). */
  fmaxHz: number;
  /** The band's lower edge, Hz (sets how far around the coarse peak the exact pass looks). */
  fminHz: number;
  /** Matches returned at most (best first). */
  topK: number;
  /** Smallest C returned. */
  minValue: number;
  /** Templates refined at full rate (the best by coarse envelope); default max(4·topK, 24). */
  refine?: number;
  /** Prepared spectra kept between calls (template ids are immutable content). */
  cache?: PreparedCache;
}

/** A template's coarse spectra for one (coarse step, block size). */
interface Prepared {
  step: number;
  block: number;
  /** Coarse length M'. */
  m: number;
  /** Per component: conj-free spectrum bins 0 … B/2 interleaved (re, im). */
  spectra: Float32Array[];
  /** Σ of the coarse samples squared over components. */
  energy: number;
  bytes: number;
}

/** Prepared template spectra by template id, bounded in bytes (oldest dropped first). */
export class PreparedCache {
  private readonly map = new Map<number, Prepared>();
  private total = 0;
  constructor(readonly maxBytes = 64 * 1024 * 1024) {}
  get(id: number, step: number, block: number): Prepared | undefined {
    const p = this.map.get(id);
    return p && p.step === step && p.block === block ? p : undefined;
  }
  set(id: number, p: Prepared): void {
    const old = this.map.get(id);
    if (old) this.total -= old.bytes;
    this.map.delete(id);
    this.map.set(id, p);
    this.total += p.bytes;
    for (const [k, v] of this.map) {
      if (this.total <= this.maxBytes) break;
      this.map.delete(k);
      this.total -= v.bytes;
    }
  }
  /** Bytes held. */
  get bytes(): number {
    return this.total;
  }
  /** Templates held. */
  get size(): number {
    return this.map.size;
  }
}

/** The coarse step k for a rate and band edge (≥ 1). */
export function coarseStep(sampleRateHz: number, fmaxHz: number): number {
  return Math.max(1, Math.floor(sampleRateHz / (2.5 * fmaxHz)));
}

/** Coarse length of an M-sample sequence taken every k-th sample. */
const coarseLength = (m: number, k: number) => Math.ceil(m / k);

/** Coarse spectra of a template for step k and block B. */
export function prepareTemplate(t: BankTemplate, step: number, block: number): Prepared {
  const plan = fftPlan(block);
  const m = coarseLength(t.samples[0]?.length ?? 0, step);
  const input = new Float64Array(block);
  const out = new Float64Array(2 * block);
  let energy = 0;
  const spectra = t.samples.map((w) => {
    input.fill(0);
    for (let j = 0; j < m; j++) {
      const v = w[j * step] as number;
      input[j] = v;
      energy += v * v;
    }
    plan.realTransform(out, input);
    return Float32Array.from(out.subarray(0, block + 2));
  });
  return { step, block, m, spectra, energy, bytes: spectra.length * (block + 2) * 4 };
}

/**
 * Matches a window's band-passed traces (`ids`, one time base, full rate `sampleRateHz`) against
 * `templates`: the best `topK` matches with C ≥ `minValue`, best first, each with its exact C and lag
 * (see the module comment). Templates at another rate, or sharing no component with the window, or
 * longer than it, are skipped. A template's components missing from the window are left out of both
 * the sums and the norms. Pure apart from filling `opts.cache`.
 */
export function matchBank(window: { ids: readonly string[]; sampleRateHz: number; traces: readonly Float64Array[] }, templates: readonly BankTemplate[], opts: MatchBankOptions): BankMatch[] {
  const fs = window.sampleRateHz;
  const n = window.traces[0]?.length ?? 0;
  const step = coarseStep(fs, opts.fmaxHz);
  const index = new Map(window.ids.map((id, i) => [id, i]));
  // Usable templates and their component → window trace mapping.
  const usable: Array<{ t: BankTemplate; map: number[]; m: number }> = [];
  for (const t of templates) {
    if (t.sampleRateHz !== fs) continue;
    const m = t.samples[0]?.length ?? 0;
    if (m < 2 * step || m > n) continue;
    const map = t.ids.map((id) => index.get(id) ?? -1);
    if (map.every((i) => i < 0)) continue;
    usable.push({ t, map, m });
  }
  if (usable.length === 0 || n === 0) return [];

  // Coarse traces, and their running sums of squares per component (for any subset and length).
  const nc = coarseLength(n, step);
  const coarse = window.traces.map((x) => {
    const d = new Float64Array(nc);
    for (let j = 0; j < nc; j++) d[j] = x[j * step] as number;
    return d;
  });
  const cumsq = coarse.map((d) => {
    const s = new Float64Array(nc + 1);
    for (let j = 0; j < nc; j++) s[j + 1] = (s[j] as number) + (d[j] as number) * (d[j] as number);
    return s;
  });

  // Group by block size (templates of similar length share the data's block spectra).
  const groups = new Map<number, Array<{ t: BankTemplate; map: number[]; m: number; p: Prepared }>>();
  for (const u of usable) {
    const mc = coarseLength(u.m, step);
    const block = Math.max(64, nextPowerOfTwo(4 * mc));
    let p = opts.cache?.get(u.t.id, step, block);
    if (!p) {
      p = prepareTemplate(u.t, step, block);
      opts.cache?.set(u.t.id, p);
    }
    const g = groups.get(block) ?? [];
    g.push({ ...u, p });
    groups.set(block, g);
  }

  const coarseBest = new Map<number, { value: number; lag: number; spacing: number }>();
  const band = { lo: opts.fminHz / (fs / step), hi: Math.min(0.5, opts.fmaxHz / (fs / step)) };
  for (const [block, group] of groups) coarsePass(block, group, coarse, cumsq, nc, band, coarseBest);

  // Refine the best-ranked at full rate.
  const refineCount = opts.refine ?? Math.max(4 * opts.topK, 24);
  // The envelope peaks where the correlation's cycles are largest; its best cycle lies within half a
  // period of the band's lowest frequency (and a coarse step or two) of there.
  const halfCycle = Math.ceil(fs / (2 * opts.fminHz));
  const ranked = usable
    .map((u) => ({ u, c: coarseBest.get(u.t.id) }))
    .filter((r): r is { u: (typeof usable)[number]; c: { value: number; lag: number; spacing: number } } => r.c !== undefined)
    .sort((a, b) => b.c.value - a.c.value)
    .slice(0, refineCount);
  const matches: BankMatch[] = [];
  for (const { u, c } of ranked) {
    const exact = refineAround(u.t, u.map, window.traces, u.m, c.lag * step, step * (2 + Math.ceil(c.spacing / 2)) + halfCycle);
    if (exact && exact.value >= opts.minValue) matches.push({ templateId: u.t.id, ...exact });
  }
  matches.sort((a, b) => b.value - a.value || a.templateId - b.templateId);
  return matches.slice(0, opts.topK);
}

/** The coarse pass for templates sharing block size B (see the module comment). */
function coarsePass(
  block: number,
  group: ReadonlyArray<{ t: BankTemplate; map: number[]; p: Prepared }>,
  coarse: readonly Float64Array[],
  cumsq: readonly Float64Array[],
  nc: number,
  band: { lo: number; hi: number },
  best: Map<number, { value: number; lag: number; spacing: number }>,
): void {
  const plan = fftPlan(block);
  // The band's bins (band edges in cycles per coarse sample) and the baseband transform's size.
  const kLo = Math.max(1, Math.floor(band.lo * block));
  const kHi = Math.min(block / 2, Math.ceil(band.hi * block));
  const q = nextPowerOfTwo(kHi - kLo + 1);
  const dec = block / q;
  const basePlan = fftPlan(q);
  let mMax = 0;
  let mMin = Infinity;
  for (const g of group) {
    mMax = Math.max(mMax, g.p.m);
    mMin = Math.min(mMin, g.p.m);
  }
  const hop = block - mMax + 1;
  const lagsTotal = nc - mMin + 1;
  const blocks = Math.ceil(lagsTotal / hop);
  // Data spectra per block and component.
  const input = new Float64Array(block);
  const tmp = new Float64Array(2 * block);
  const dataSpectra: Float64Array[][] = [];
  for (let b = 0; b < blocks; b++) {
    dataSpectra.push(
      coarse.map((d) => {
        input.fill(0);
        const from = b * hop;
        const to = Math.min(nc, from + block);
        for (let j = from; j < to; j++) input[j - from] = d[j] as number;
        plan.realTransform(tmp, input);
        return tmp.slice(0, block + 2);
      }),
    );
  }
  // Segment energies per (component subset, coarse length), shared by templates alike.
  const energies = new Map<string, Float64Array>();
  const energyOf = (map: number[], m: number): Float64Array => {
    const key = `${map.join(',')}|${m}`;
    let e = energies.get(key);
    if (!e) {
      const lags = nc - m + 1;
      e = new Float64Array(Math.max(0, lags));
      let eMax = 0;
      for (let l = 0; l < lags; l++) {
        let s = 0;
        for (const ci of map) if (ci >= 0) s += ((cumsq[ci] as Float64Array)[l + m] as number) - ((cumsq[ci] as Float64Array)[l] as number);
        e[l] = s;
        if (s > eMax) eMax = s;
      }
      // Empty segments (dead channel, zero padding) read as 0, as in normalizedXcorr.
      const floor = eMax * 1e-12;
      for (let l = 0; l < lags; l++) e[l] = (e[l] as number) > floor ? 1 / Math.sqrt(e[l] as number) : 0;
      energies.set(key, e);
    }
    return e;
  };
  const full = new Float64Array(2 * q);
  const out = new Float64Array(2 * q);
  for (const g of group) {
    const inv = energyOf(g.map, g.p.m);
    const wInv = g.p.energy > 0 ? 1 / Math.sqrt(g.p.energy) : 0;
    let bestEnv = -Infinity;
    let bestLag = 0;
    for (let b = 0; b < blocks; b++) {
      basebandSpectrum(full, dataSpectra[b] as Float64Array[], g.p.spectra, g.map, kLo, kHi);
      basePlan.inverseTransform(out, full);
      const from = b * hop;
      for (let j = 0; j < q; j++) {
        const l = j * dec;
        if (l >= hop || from + l >= lagsTotal || from + l >= inv.length) break;
        const re = out[2 * j] as number;
        const im = out[2 * j + 1] as number;
        // Envelope² scaled by the data energy; compared squared (no square root per lag).
        const scale = inv[from + l] as number;
        const env2 = (re * re + im * im) * scale * scale;
        if (env2 > bestEnv) {
          bestEnv = env2;
          bestLag = from + l;
        }
      }
    }
    // fft.js's inverse divides by q; the block's correlation needs 1/B, and the analytic signal 2×.
    if (bestEnv > -Infinity) best.set(g.t.id, { value: ((2 * q) / block) * Math.sqrt(bestEnv) * wInv, lag: bestLag, spacing: dec });
  }
}

/**
 * The analytic correlation's band, moved to 0 Hz: bins kLo … kHi of S_k = Σ_c X_c,k·conj(W_c,k)
 * ((a + ib)(c − id) = (ac + bd) + i(bc − ad); the spectrum of the real circular correlation r summed
 * over the template's components present in the window) written to bins 0 … kHi − kLo of `full`,
 * the rest 0. The inverse transform of size Q of these bins is, at every (B/Q)-th lag, the analytic
 * signal z = r + i·H(r) of r (negative frequencies dropped, positive doubled: Bracewell, The Fourier
 * Transform and Its Applications, ch. 12) times a phase ramp — so its magnitude is r's envelope,
 * sampled every B/Q coarse lags (the envelope is as smooth as the band is narrow, so this loses
 * little), and its peak does not depend on where the lags fall within the band's cycles.
 */
function basebandSpectrum(full: Float64Array, xs: readonly Float64Array[], ws: readonly Float32Array[], map: readonly number[], kLo: number, kHi: number): void {
  const xsUsed: Float64Array[] = [];
  const wsUsed: Float32Array[] = [];
  for (let c = 0; c < ws.length; c++) {
    const ci = map[c] as number;
    if (ci >= 0) {
      xsUsed.push(xs[ci] as Float64Array);
      wsUsed.push(ws[c] as Float32Array);
    }
  }
  const nc = xsUsed.length;
  for (let k = kLo; k <= kHi; k++) {
    const re = 2 * k;
    const im = re + 1;
    let ar = 0;
    let ai = 0;
    for (let c = 0; c < nc; c++) {
      const x = xsUsed[c] as Float64Array;
      const w = wsUsed[c] as Float32Array;
      const xr = x[re] as number;
      const xi = x[im] as number;
      const wr = w[re] as number;
      const wi = w[im] as number;
      ar += xr * wr + xi * wi;
      ai += xi * wr - xr * wi;
    }
    const o = 2 * (k - kLo);
    full[o] = ar;
    full[o + 1] = ai;
  }
  full.fill(0, 2 * (kHi - kLo + 1));
}

/**
 * The exact C (definition, full rate) at every lag within ±`radius` of `center`, and its best lag;
 * with each component's own C there. Null when no lag is valid or the segments have no energy.
 */
function refineAround(t: BankTemplate, map: readonly number[], traces: readonly Float64Array[], m: number, center: number, radius: number): { value: number; lag: number; perChannel: Array<number | null> } | null {
  const n = traces[0]?.length ?? 0;
  const lo = Math.max(0, center - radius);
  const hi = Math.min(n - m, center + radius);
  let ww = 0;
  for (let c = 0; c < t.samples.length; c++) {
    if ((map[c] as number) < 0) continue;
    const w = t.samples[c] as ArrayLike<number>;
    for (let i = 0; i < m; i++) ww += (w[i] as number) * (w[i] as number);
  }
  if (!(ww > 0)) return null;
  let best: { value: number; lag: number } | null = null;
  for (let lag = lo; lag <= hi; lag++) {
    let dot = 0;
    let xx = 0;
    for (let c = 0; c < t.samples.length; c++) {
      const ci = map[c] as number;
      if (ci < 0) continue;
      const w = t.samples[c] as ArrayLike<number>;
      const x = traces[ci] as Float64Array;
      for (let i = 0; i < m; i++) {
        const b = x[lag + i] as number;
        dot += (w[i] as number) * b;
        xx += b * b;
      }
    }
    if (!(xx > 0)) continue;
    const v = dot / Math.sqrt(ww * xx);
    if (!best || v > best.value) best = { value: Math.max(-1, Math.min(1, v)), lag };
  }
  if (!best) return null;
  const perChannel = t.samples.map((wAny, c) => {
    const ci = map[c] as number;
    if (ci < 0) return null;
    const w = wAny;
    const x = traces[ci] as Float64Array;
    let dot = 0;
    let xx = 0;
    let wc = 0;
    for (let i = 0; i < m; i++) {
      const b = x[(best as { lag: number }).lag + i] as number;
      dot += (w[i] as number) * b;
      xx += b * b;
      wc += (w[i] as number) * (w[i] as number);
    }
    return xx > 0 && wc > 0 ? dot / Math.sqrt(xx * wc) : null;
  });
  return { ...best, perChannel };
}
