import { DifPlan } from './dif-fft';
import { fftPlan, nextPowerOfTwo } from './xcorr';

const difPlans = new Map<number, DifPlan>();
/** The in-place DIF plan for size n, kept across calls. */
function difPlan(n: number): DifPlan {
  let p = difPlans.get(n);
  if (!p) difPlans.set(n, (p = new DifPlan(n)));
  return p;
}

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
 *    the band's bins only, and one inverse DFT of the next power of two Q above their count gives the
 *    ANALYTIC correlation moved to 0 Hz (negative frequencies dropped), sampled every B/Q coarse lags;
 *    its magnitude is the correlation's envelope. (It is computed as the forward transform of the
 *    conjugated products, whose outputs are the conjugates of the inverse's times Q: same magnitudes,
 *    no division per output; in place, by dif-fft.ts, whose peak scan weighs each output by
 *    1/(data energy) at its lag.)
 *    Templates are ranked by their largest normalised envelope: unlike the correlation itself,
 *    sampled every k samples, the envelope's peak does not drop when the true peak falls between
 *    coarse lags (for a narrow-band 8 Hz burst at k = 4 the sampled correlation can lose half its
 *    peak; the envelope, as smooth as the band is narrow, loses little).
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

/** A template's coarse spectra for one (coarse step, block size, band bins). */
interface Prepared {
  step: number;
  block: number;
  /** The band's first and last bins (of B) kept. */
  kLo: number;
  kHi: number;
  /** Coarse length M'. */
  m: number;
  /**
   * Bins kLo … kHi of each component's spectrum (size B, no conjugate), interleaved (re, im),
   * component after component: only the band's bins enter the coarse pass, so only they are kept.
   */
  band: Float32Array;
  /** Σ of the coarse samples squared over components. */
  energy: number;
  bytes: number;
}

/** Prepared template spectra by template id, bounded in bytes (oldest dropped first). */
export class PreparedCache {
  private readonly map = new Map<number, Prepared>();
  private total = 0;
  constructor(readonly maxBytes = 64 * 1024 * 1024) {}
  get(id: number, step: number, block: number, kLo: number, kHi: number): Prepared | undefined {
    const p = this.map.get(id);
    return p && p.step === step && p.block === block && p.kLo === kLo && p.kHi === kHi ? p : undefined;
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

/** The band's bins of a size-B transform: band edges in cycles per coarse sample. */
function bandBins(block: number, band: { lo: number; hi: number }): { kLo: number; kHi: number } {
  return { kLo: Math.max(1, Math.floor(band.lo * block)), kHi: Math.min(block / 2, Math.ceil(band.hi * block)) };
}

/** Work buffers of the matcher, kept for the thread's life and grown on demand (no allocation per template). */
const work = { input: new Float64Array(0), spectrum: new Float64Array(0), base: new Float64Array(0), out: new Float64Array(0), dots: new Float64Array(0) };
function buffer(name: keyof typeof work, n: number): Float64Array {
  if (work[name].length < n) work[name] = new Float64Array(n);
  return work[name];
}

/** Coarse band spectra of a template for step k, block B and bins kLo … kHi. */
export function prepareTemplate(t: BankTemplate, step: number, block: number, kLo: number, kHi: number): Prepared {
  const plan = fftPlan(block);
  const m = coarseLength(t.samples[0]?.length ?? 0, step);
  const input = buffer('input', block).subarray(0, block);
  const out = buffer('spectrum', 2 * block).subarray(0, 2 * block);
  const nb = kHi - kLo + 1;
  const band = new Float32Array(t.samples.length * nb * 2);
  let energy = 0;
  t.samples.forEach((w, c) => {
    input.fill(0);
    for (let j = 0; j < m; j++) {
      const v = w[j * step] as number;
      input[j] = v;
      energy += v * v;
    }
    plan.realTransform(out, input);
    band.set(out.subarray(2 * kLo, 2 * (kHi + 1)), c * nb * 2);
  });
  return { step, block, kLo, kHi, m, band, energy, bytes: band.byteLength };
}

/**
 * The coarse pass's envelope weights for one (component subset, coarse length), per block b at
 * offset b·q: by position of the transform's output (dif-fft.ts leaves them in digit-reversed
 * order), 1 / data energy over the template's length at that position's lag (0: empty segment; NaN:
 * a lag the block does not cover), and the lag.
 */
interface Scan {
  weight: Float64Array;
  lag: Int32Array;
}

/** A usable template of one call: its component → window trace mapping and length. */
interface Usable {
  t: BankTemplate;
  /** Window trace index of each template component (−1: absent from the window). */
  map: number[];
  /** Bit mask of the window traces it uses (for the shared segment energies). */
  mask: number;
  /** Full-rate length M. */
  m: number;
  p: Prepared | null;
  /** Coarse pass: largest normalised envelope, its coarse lag and the lag spacing it was sampled at. */
  coarseValue: number;
  coarseLag: number;
  spacing: number;
}

/**
 * Matches a window's band-passed traces (`ids`, one time base, full rate `sampleRateHz`) against
 * `templates`: the best `topK` matches with C ≥ `minValue`, best first, each with its exact C and lag
 * (see the module comment). Templates at another rate, or sharing no component with the window, or
 * longer than it, are skipped. A template's components missing from the window are left out of both
 * the sums and the norms. Pure apart from filling `opts.cache` and reusing the thread's work buffers.
 */
export function matchBank(window: { ids: readonly string[]; sampleRateHz: number; traces: readonly Float64Array[] }, templates: readonly BankTemplate[], opts: MatchBankOptions): BankMatch[] {
  const fs = window.sampleRateHz;
  const n = window.traces[0]?.length ?? 0;
  const step = coarseStep(fs, opts.fmaxHz);
  const index = new Map(window.ids.map((id, i) => [id, i]));
  if (window.traces.length > 30) throw new RangeError(`matchBank: ${window.traces.length} components (at most 30)`);
  // Usable templates and their component → window trace mapping.
  const usable: Usable[] = [];
  for (const t of templates) {
    if (t.sampleRateHz !== fs) continue;
    const m = t.samples[0]?.length ?? 0;
    if (m < 2 * step || m > n) continue;
    const map = t.ids.map((id) => index.get(id) ?? -1);
    let mask = 0;
    for (const i of map) if (i >= 0) mask |= 1 << i;
    if (mask === 0) continue;
    usable.push({ t, map, mask, m, p: null, coarseValue: -Infinity, coarseLag: 0, spacing: 1 });
  }
  if (usable.length === 0 || n === 0) return [];

  // Coarse traces, and their running sums of squares per component (for any subset and length).
  const nc = coarseLength(n, step);
  const coarse = window.traces.map((x) => {
    const d = new Float64Array(nc);
    for (let j = 0; j < nc; j++) d[j] = x[j * step] as number;
    return d;
  });
  const cumsq = coarse.map((d) => runningSquares(d));

  // Group by block size (templates of similar length share the data's block spectra).
  const band = { lo: opts.fminHz / (fs / step), hi: Math.min(0.5, opts.fmaxHz / (fs / step)) };
  const groups = new Map<number, Usable[]>();
  for (const u of usable) {
    const mc = coarseLength(u.m, step);
    const block = Math.max(64, nextPowerOfTwo(4 * mc));
    const { kLo, kHi } = bandBins(block, band);
    let p = opts.cache?.get(u.t.id, step, block, kLo, kHi);
    if (!p) {
      p = prepareTemplate(u.t, step, block, kLo, kHi);
      opts.cache?.set(u.t.id, p);
    }
    u.p = p;
    let g = groups.get(block);
    if (!g) groups.set(block, (g = []));
    g.push(u);
  }
  for (const [block, group] of groups) coarsePass(block, group, coarse, cumsq, nc, band);

  // Refine the best-ranked at full rate.
  const refineCount = opts.refine ?? Math.max(4 * opts.topK, 24);
  // The envelope peaks where the correlation's cycles are largest; its best cycle lies within half a
  // period of the band's lowest frequency (and a coarse step or two) of there.
  const halfCycle = Math.ceil(fs / (2 * opts.fminHz));
  const ranked = usable
    .filter((u) => u.coarseValue > -Infinity)
    .sort((a, b) => b.coarseValue - a.coarseValue)
    .slice(0, refineCount);
  // Full-rate running sums of squares, once per window: every refined lag's data energy is a difference of two.
  const fullCumsq = window.traces.map((x) => runningSquares(x));
  const matches: BankMatch[] = [];
  for (const u of ranked) {
    const exact = refineAround(u.t, u.map, window.traces, fullCumsq, u.m, u.coarseLag * step, step * (2 + Math.ceil(u.spacing / 2)) + halfCycle);
    if (exact && exact.value >= opts.minValue) matches.push({ templateId: u.t.id, ...exact });
  }
  matches.sort((a, b) => b.value - a.value || a.templateId - b.templateId);
  return matches.slice(0, opts.topK);
}

/** s[j] = Σ_{i<j} x[i]² (length n + 1): the energy of x[a … b) is s[b] − s[a]. */
function runningSquares(x: Float64Array): Float64Array {
  const s = new Float64Array(x.length + 1);
  let acc = 0;
  for (let j = 0; j < x.length; j++) {
    const v = x[j] as number;
    acc += v * v;
    s[j + 1] = acc;
  }
  return s;
}

/**
 * The coarse pass for templates sharing block size B (see the module comment): sets each template's
 * `coarseValue`, `coarseLag` and `spacing`. Per template and block, the analytic correlation's band
 * is moved to 0 Hz: bins kLo … kHi of S_k = Σ_c X_c,k·conj(W_c,k) (the spectrum of the real circular
 * correlation r summed over the template's components present in the window) are written to bins
 * 0 … kHi − kLo, the rest 0. The data's band bins are transformed once per block and component and
 * kept in one array; the templates' band bins come prepared (`PreparedCache`). The inverse
 * transform of size Q of these bins (computed as the forward transform of their conjugates: same
 * magnitudes, scale Q instead of 1) is, at every (B/Q)-th lag, the analytic signal z = r + i·H(r) of r
 * (negative frequencies dropped, positive doubled: Bracewell, The Fourier Transform and Its
 * Applications, ch. 12) times a phase ramp — so its magnitude is r's envelope, sampled every B/Q coarse
 * lags (the envelope is as smooth as the band is narrow, so this loses little), and its peak does not
 * depend on where the lags fall within the band's cycles.
 */
function coarsePass(block: number, group: readonly Usable[], coarse: readonly Float64Array[], cumsq: readonly Float64Array[], nc: number, band: { lo: number; hi: number }): void {
  const plan = fftPlan(block);
  // The band's bins (band edges in cycles per coarse sample) and the baseband transform's size.
  const { kLo, kHi } = bandBins(block, band);
  const nb = kHi - kLo + 1;
  const q = nextPowerOfTwo(nb);
  const dec = block / q;
  const basePlan = difPlan(q);
  let mMax = 0;
  let mMin = Infinity;
  for (const g of group) {
    const m = (g.p as Prepared).m;
    mMax = Math.max(mMax, m);
    mMin = Math.min(mMin, m);
  }
  const hop = block - mMax + 1;
  const lagsTotal = nc - mMin + 1;
  const blocks = Math.ceil(lagsTotal / hop);
  const nx = coarse.length;
  // The data's band bins, per block and component: [block][component][bin (re, im)], one array.
  const stride = nb * 2;
  const dataBand = new Float64Array(blocks * nx * stride);
  const input = buffer('input', block).subarray(0, block);
  const tmp = buffer('spectrum', 2 * block).subarray(0, 2 * block);
  for (let b = 0; b < blocks; b++) {
    for (let c = 0; c < nx; c++) {
      const d = coarse[c] as Float64Array;
      input.fill(0);
      const from = b * hop;
      const to = Math.min(nc, from + block);
      for (let j = from; j < to; j++) input[j - from] = d[j] as number;
      plan.realTransform(tmp, input);
      dataBand.set(tmp.subarray(2 * kLo, 2 * (kHi + 1)), (b * nx + c) * stride);
    }
  }
  // Where to read each block's envelope: per (component subset, coarse length), shared by templates
  // alike, each output position's lag and its weight 1/(segment energy), 0 for an empty segment (dead
  // channel, zero padding), as in normalizedXcorr, NaN where the block does not cover the lag.
  const order = basePlan.order;
  const scans = new Map<number, Scan>();
  const scanOf = (mask: number, m: number): Scan => {
    const key = mask * 1_000_000 + m;
    let sc = scans.get(key);
    if (!sc) {
      const lags = Math.max(0, nc - m + 1);
      const e = new Float64Array(lags);
      let eMax = 0;
      for (let ci = 0; ci < nx; ci++) {
        if (!(mask & (1 << ci))) continue;
        const cs = cumsq[ci] as Float64Array;
        for (let l = 0; l < lags; l++) e[l] = (e[l] as number) + (cs[l + m] as number) - (cs[l] as number);
      }
      for (let l = 0; l < lags; l++) if ((e[l] as number) > eMax) eMax = e[l] as number;
      const floor = eMax * 1e-12;
      const weight = new Float64Array(blocks * q).fill(NaN);
      const lag = new Int32Array(blocks * q);
      for (let b = 0; b < blocks; b++) {
        const from = b * hop;
        const jEnd = Math.max(0, Math.min(Math.ceil(hop / dec), Math.ceil((Math.min(lagsTotal, lags) - from) / dec), q));
        for (let p = 0; p < q; p++) {
          const j = order[p] as number;
          const l = from + j * dec;
          lag[b * q + p] = l;
          if (j < jEnd) weight[b * q + p] = (e[l] as number) > floor ? 1 / (e[l] as number) : 0;
        }
      }
      sc = { weight, lag };
      scans.set(key, sc);
    }
    return sc;
  };
  const full = buffer('base', 2 * q).subarray(0, 2 * q);
  // The transform sums without scaling; the block's correlation needs 1/B, and the analytic signal 2×.
  const gain = 2 / block;
  const pairsX: number[] = [];
  const pairsW: number[] = [];
  for (const g of group) {
    const p = g.p as Prepared;
    const sc = scanOf(g.mask, p.m);
    const wInv = p.energy > 0 ? 1 / Math.sqrt(p.energy) : 0;
    // (window component, template component) offsets of the pairs present in the window.
    pairsX.length = 0;
    pairsW.length = 0;
    for (let c = 0; c < g.map.length; c++) {
      const ci = g.map[c] as number;
      if (ci < 0) continue;
      pairsX.push(ci * stride);
      pairsW.push(c * stride);
    }
    const np = pairsX.length;
    const w = p.band;
    let bestEnv = -Infinity;
    let bestLag = 0;
    for (let b = 0; b < blocks; b++) {
      const base = b * nx * stride;
      // S_k = Σ_c X_c,k·conj(W_c,k) over the band's bins, moved to bins 0 … nb − 1 (see the doc comment).
      if (np === 3) {
        // The usual case (three components present), in one pass over the bins.
        const x0 = base + (pairsX[0] as number);
        const x1 = base + (pairsX[1] as number);
        const x2 = base + (pairsX[2] as number);
        const w0 = pairsW[0] as number;
        const w1 = pairsW[1] as number;
        const w2 = pairsW[2] as number;
        for (let k = 0; k < stride; k += 2) {
          const ar = dataBand[x0 + k] as number;
          const ai = dataBand[x0 + k + 1] as number;
          const br = dataBand[x1 + k] as number;
          const bi = dataBand[x1 + k + 1] as number;
          const cr = dataBand[x2 + k] as number;
          const ci = dataBand[x2 + k + 1] as number;
          const ur = w[w0 + k] as number;
          const ui = w[w0 + k + 1] as number;
          const vr = w[w1 + k] as number;
          const vi = w[w1 + k + 1] as number;
          const tr = w[w2 + k] as number;
          const ti = w[w2 + k + 1] as number;
          // (a + ib)(c − id) = (ac + bd) + i(bc − ad), summed over the three; stored conjugated.
          full[k] = ar * ur + ai * ui + br * vr + bi * vi + cr * tr + ci * ti;
          full[k + 1] = ar * ui - ai * ur + br * vi - bi * vr + cr * ti - ci * tr;
        }
      } else {
        full.fill(0, 0, stride);
        for (let pi = 0; pi < np; pi++) {
          const xo = base + (pairsX[pi] as number);
          const wo = pairsW[pi] as number;
          for (let k = 0; k < stride; k += 2) {
            const xr = dataBand[xo + k] as number;
            const xi = dataBand[xo + k + 1] as number;
            const wr = w[wo + k] as number;
            const wi = w[wo + k + 1] as number;
            full[k] = (full[k] as number) + xr * wr + xi * wi;
            full[k + 1] = (full[k + 1] as number) + xr * wi - xi * wr;
          }
        }
      }
      // In place, bins ≥ nb read as 0; the largest envelope² scaled by the data energy (compared
      // squared: no square root per lag), the earliest lag on a tie (dif-fft.ts).
      const pk = basePlan.peak(full, nb, sc.weight, sc.lag, b * q);
      if (pk.pos >= 0 && (pk.value > bestEnv || (pk.value === bestEnv && (sc.lag[b * q + pk.pos] as number) < bestLag))) {
        bestEnv = pk.value;
        bestLag = sc.lag[b * q + pk.pos] as number;
      }
    }
    if (bestEnv > -Infinity) {
      g.coarseValue = gain * Math.sqrt(bestEnv) * wInv;
      g.coarseLag = bestLag;
      g.spacing = dec;
    }
  }
}


/**
 * The exact C (definition, full rate) at every lag within ±`radius` of `center`, and its best lag;
 * with each component's own C there. The data energy of each lag is a difference of the window's
 * running sums of squares (`cumsq`, once per window), so each lag costs one inner product per
 * component. Segments below 1e-12 of the used components' whole energy count as empty (as in
 * normalizedXcorr: round-off is not divided by almost nothing). Null when no lag is valid or the
 * segments have no energy.
 */
function refineAround(t: BankTemplate, map: readonly number[], traces: readonly Float64Array[], cumsq: readonly Float64Array[], m: number, center: number, radius: number): { value: number; lag: number; perChannel: Array<number | null> } | null {
  const n = traces[0]?.length ?? 0;
  const lo = Math.max(0, center - radius);
  const hi = Math.min(n - m, center + radius);
  let ww = 0;
  let total = 0;
  for (let c = 0; c < t.samples.length; c++) {
    const ci = map[c] as number;
    if (ci < 0) continue;
    const w = t.samples[c] as ArrayLike<number>;
    for (let i = 0; i < m; i++) ww += (w[i] as number) * (w[i] as number);
    total += (cumsq[ci] as Float64Array)[n] as number;
  }
  if (!(ww > 0)) return null;
  const floor = total * 1e-12;
  let best: { value: number; lag: number } | null = null;
  // Σ_c Σ_i w_c[i]·x_c[lag + i] for every lag lo … hi, component after component (the same sums, in
  // the same order, as one innerProduct per lag and component; two lags per pass over w).
  const count = hi - lo + 1;
  if (count <= 0) return null;
  const dots = buffer('dots', count).subarray(0, count).fill(0);
  for (let c = 0; c < t.samples.length; c++) {
    const ci = map[c] as number;
    if (ci < 0) continue;
    innerProducts(t.samples[c] as ArrayLike<number>, traces[ci] as Float64Array, lo, count, m, dots);
  }
  for (let lag = lo; lag <= hi; lag++) {
    let xx = 0;
    for (let c = 0; c < t.samples.length; c++) {
      const ci = map[c] as number;
      if (ci < 0) continue;
      const cs = cumsq[ci] as Float64Array;
      xx += (cs[lag + m] as number) - (cs[lag] as number);
    }
    if (!(xx > floor)) continue;
    const v = (dots[lag - lo] as number) / Math.sqrt(ww * xx);
    if (!best || v > best.value) best = { value: Math.max(-1, Math.min(1, v)), lag };
  }
  if (!best) return null;
  const at = best.lag;
  const perChannel = t.samples.map((w, c) => {
    const ci = map[c] as number;
    if (ci < 0) return null;
    const x = traces[ci] as Float64Array;
    let dot = 0;
    let xx = 0;
    let wc = 0;
    for (let i = 0; i < m; i++) {
      const b = x[at + i] as number;
      dot += (w[i] as number) * b;
      xx += b * b;
      wc += (w[i] as number) * (w[i] as number);
    }
    return xx > 0 && wc > 0 ? dot / Math.sqrt(xx * wc) : null;
  });
  return { ...best, perChannel };
}

/**
 * out[j] += Σ_{i<m} w[i]·x[from + j + i] for j = 0 … count − 1: each sum exactly as `innerProduct`
 * (four partial sums by i mod 4, added as s0 + s1 + (s2 + s3)), two lags per pass over w (eight
 * independent chains; each w[i] read once for both).
 */
function innerProducts(w: ArrayLike<number>, x: Float64Array, from: number, count: number, m: number, out: Float64Array): void {
  let j = 0;
  for (; j + 1 < count; j += 2) {
    const f = from + j;
    let a0 = 0;
    let a1 = 0;
    let a2 = 0;
    let a3 = 0;
    let b0 = 0;
    let b1 = 0;
    let b2 = 0;
    let b3 = 0;
    let i = 0;
    for (; i + 3 < m; i += 4) {
      const w0 = w[i] as number;
      const w1 = w[i + 1] as number;
      const w2 = w[i + 2] as number;
      const w3 = w[i + 3] as number;
      const x0 = x[f + i] as number;
      const x1 = x[f + i + 1] as number;
      const x2 = x[f + i + 2] as number;
      const x3 = x[f + i + 3] as number;
      const x4 = x[f + i + 4] as number;
      a0 += w0 * x0;
      a1 += w1 * x1;
      a2 += w2 * x2;
      a3 += w3 * x3;
      b0 += w0 * x1;
      b1 += w1 * x2;
      b2 += w2 * x3;
      b3 += w3 * x4;
    }
    for (; i < m; i++) {
      a0 += (w[i] as number) * (x[f + i] as number);
      b0 += (w[i] as number) * (x[f + 1 + i] as number);
    }
    out[j] = (out[j] as number) + (a0 + a1 + (a2 + a3));
    out[j + 1] = (out[j + 1] as number) + (b0 + b1 + (b2 + b3));
  }
  if (j < count) out[j] = (out[j] as number) + innerProduct(w, x, from + j, m);
}

/** Σ_{i<m} w[i]·x[from + i], four partial sums (independent chains run in parallel on the CPU). */
function innerProduct(w: ArrayLike<number>, x: Float64Array, from: number, m: number): number {
  let s0 = 0;
  let s1 = 0;
  let s2 = 0;
  let s3 = 0;
  let i = 0;
  for (; i + 3 < m; i += 4) {
    s0 += (w[i] as number) * (x[from + i] as number);
    s1 += (w[i + 1] as number) * (x[from + i + 1] as number);
    s2 += (w[i + 2] as number) * (x[from + i + 2] as number);
    s3 += (w[i + 3] as number) * (x[from + i + 3] as number);
  }
  for (; i < m; i++) s0 += (w[i] as number) * (x[from + i] as number);
  return s0 + s1 + (s2 + s3);
}
