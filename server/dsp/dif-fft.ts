/**
 * An in-place complex DFT for the similarity coarse pass, where only the magnitudes of some outputs
 * are wanted and the upper inputs are zero: radix-4 decimation in frequency (a radix-2 stage last
 * when log2 n is odd), natural-order input, outputs left in digit-reversed order (`order` says which
 * output each position holds), so no permutation pass is made. Inputs at and above `nonZero` are
 * taken as 0 without being read (the band's bins fill only part of the transform).
 *
 * Forward transform, numpy's sign and scale: X_k = Σ_{m<n} x_m·e^{−2πikm/n}, no 1/n (the DFT's
 * definition; e.g. Oppenheim & Schafer, Discrete-Time Signal Processing, ch. 8). Decimation in
 * frequency, radix 4: with L the current span and a, b, c, d the samples k, k + L/4, k + L/2,
 * k + 3L/4 (0 ≤ k < L/4), the four length-L/4 sequences
 *   y0 = a + b + c + d,  y1 = (a − i·b − c + i·d)·W^k,  y2 = (a − b + c − d)·W^{2k},
 *   y3 = (a + i·b − c − i·d)·W^{3k},  W = e^{−2πi/L},
 * have as DFTs the outputs X_{4j}, X_{4j+1}, X_{4j+2}, X_{4j+3} (ch. 9 of the same book, for radix 2).
 */
export class DifPlan {
  /** Transform size n (a power of two ≥ 2). */
  readonly size: number;
  /** order[p] = the output index k held at position p after `transform`. */
  readonly order: Int32Array;
  /** e^{−2πij/n}, j = 0 … n − 1, interleaved (cos, −sin). */
  private readonly table: Float64Array;

  constructor(n: number) {
    if (!(n >= 2) || (n & (n - 1)) !== 0) throw new RangeError(`DifPlan: size ${n} is not a power of two ≥ 2`);
    this.size = n;
    this.table = new Float64Array(2 * n);
    for (let j = 0; j < n; j++) {
      this.table[2 * j] = Math.cos((2 * Math.PI * j) / n);
      this.table[2 * j + 1] = -Math.sin((2 * Math.PI * j) / n);
    }
    this.order = DifPlan.digitReversal(n);
  }

  /**
   * Output index at each position: a span L split in four quarters holds, at position r·L/4 + p',
   * the output 4·k' + r of the whole, k' the output held at p' in the quarter's own transform (and a
   * span of 2, the radix-2 stage, keeps its order).
   */
  private static digitReversal(n: number): Int32Array {
    const order = new Int32Array(n);
    const fill = (len: number, at: number, scale: number, offset: number): void => {
      if (len === 1) {
        order[at] = offset;
        return;
      }
      if (len === 2) {
        order[at] = offset;
        order[at + 1] = offset + scale;
        return;
      }
      const q = len / 4;
      for (let r = 0; r < 4; r++) fill(q, at + r * q, scale * 4, offset + r * scale);
    };
    fill(n, 0, 1, 0);
    return order;
  }

  /**
   * Transforms `data` (interleaved re, im, n complex values) in place; entries at complex index ≥
   * `nonZero` are taken as 0 (and overwritten). Position p then holds output `order[p]`.
   */
  transform(data: Float64Array, nonZero = this.size): void {
    const n = this.size;
    const nz = Math.max(0, Math.min(n, Math.floor(nonZero)));
    let len = n;
    if (n >= 8) {
      this.firstStage(data, nz);
      len = n / 4;
    } else data.fill(0, 2 * nz, 2 * n);
    for (; len > 8; len /= 4) this.stage(data, len);
    if (len === 8) {
      // Span 8 then the radix-2 stage, in one pass over the data.
      this.lastEight(data);
      return;
    }
    if (len === 4) {
      // The last radix-4 stage: every twiddle is 1.
      for (let ia = 0; ia < 2 * n; ia += 8) {
        const ar = data[ia] as number;
        const ai = data[ia + 1] as number;
        const br = data[ia + 2] as number;
        const bi = data[ia + 3] as number;
        const cr = data[ia + 4] as number;
        const ci = data[ia + 5] as number;
        const dr = data[ia + 6] as number;
        const di = data[ia + 7] as number;
        const s0r = ar + cr;
        const s0i = ai + ci;
        const s1r = ar - cr;
        const s1i = ai - ci;
        const s2r = br + dr;
        const s2i = bi + di;
        const s3r = br - dr;
        const s3i = bi - di;
        data[ia] = s0r + s2r;
        data[ia + 1] = s0i + s2i;
        data[ia + 2] = s1r + s3i;
        data[ia + 3] = s1i - s3r;
        data[ia + 4] = s0r - s2r;
        data[ia + 5] = s0i - s2i;
        data[ia + 6] = s1r - s3i;
        data[ia + 7] = s1i + s3r;
      }
    } else if (len === 2) {
      // The radix-2 stage (log2 n odd): twiddle 1.
      for (let ia = 0; ia < 2 * n; ia += 4) {
        const ar = data[ia] as number;
        const ai = data[ia + 1] as number;
        const br = data[ia + 2] as number;
        const bi = data[ia + 3] as number;
        data[ia] = ar + br;
        data[ia + 1] = ai + bi;
        data[ia + 2] = ar - br;
        data[ia + 3] = ai - bi;
      }
    }
  }

  /**
   * The position p with the largest |X|²·weight[at + p] after the transform of `data` (as
   * `transform`, `data` is overwritten), and that value; on equal values the smaller `tie[at + p]`. Positions whose
   * weight is NaN are never chosen (value −∞ and position −1 when none can be). When the last stages
   * are the span-8 and radix-2 ones (log2 n odd, n ≥ 32) the outputs are weighed as they are made,
   * without being stored: the same numbers as `transform` then a pass over the positions.
   */
  peak(data: Float64Array, nonZero: number, weight: Float64Array, tie: Int32Array, at = 0): { value: number; pos: number } {
    const n = this.size;
    let len = n;
    if (n >= 32 && (Math.log2(n) & 1) === 1) {
      this.firstStage(data, Math.max(0, Math.min(n, Math.floor(nonZero))));
      for (len = n / 4; len > 8; len /= 4) this.stage(data, len);
      return this.lastEightPeak(data, weight, tie, at);
    }
    this.transform(data, nonZero);
    let value = -Infinity;
    let pos = -1;
    for (let p = 0; p < n; p++) {
      const re = data[2 * p] as number;
      const im = data[2 * p + 1] as number;
      const v = (re * re + im * im) * (weight[at + p] as number);
      if (v > value || (v === value && (tie[at + p] as number) < (tie[at + pos] as number))) {
        value = v;
        pos = p;
      }
    }
    return { value, pos };
  }

  /**
   * The radix-4 stage of span 8 (twiddles 1 for k = 0; W, W², W³ for k = 1, W = e^{−2πi/8}, the
   * table's entries) followed by the radix-2 stage, on each group of 8 in registers: the same
   * operations as the two passes.
   */
  private lastEight(data: Float64Array): void {
    const n = this.size;
    const t1 = 2 * (n / 8);
    const w1r = this.table[t1] as number;
    const w1i = this.table[t1 + 1] as number;
    const w2r = this.table[2 * t1] as number;
    const w2i = this.table[2 * t1 + 1] as number;
    const w3r = this.table[3 * t1] as number;
    const w3i = this.table[3 * t1 + 1] as number;
    for (let o = 0; o < 2 * n; o += 16) {
      // k = 0: a, b, c, d at 0, 2, 4, 6 (complex), twiddle 1.
      let ar = data[o] as number;
      let ai = data[o + 1] as number;
      let br = data[o + 4] as number;
      let bi = data[o + 5] as number;
      let cr = data[o + 8] as number;
      let ci = data[o + 9] as number;
      let dr = data[o + 12] as number;
      let di = data[o + 13] as number;
      let s0r = ar + cr;
      let s0i = ai + ci;
      let s1r = ar - cr;
      let s1i = ai - ci;
      let s2r = br + dr;
      let s2i = bi + di;
      let s3r = br - dr;
      let s3i = bi - di;
      const p0r = s0r + s2r;
      const p0i = s0i + s2i;
      const p2r = s1r + s3i;
      const p2i = s1i - s3r;
      const p4r = s0r - s2r;
      const p4i = s0i - s2i;
      const p6r = s1r - s3i;
      const p6i = s1i + s3r;
      // k = 1: a, b, c, d at 1, 3, 5, 7, twiddles W, W², W³.
      ar = data[o + 2] as number;
      ai = data[o + 3] as number;
      br = data[o + 6] as number;
      bi = data[o + 7] as number;
      cr = data[o + 10] as number;
      ci = data[o + 11] as number;
      dr = data[o + 14] as number;
      di = data[o + 15] as number;
      s0r = ar + cr;
      s0i = ai + ci;
      s1r = ar - cr;
      s1i = ai - ci;
      s2r = br + dr;
      s2i = bi + di;
      s3r = br - dr;
      s3i = bi - di;
      const p1r = s0r + s2r;
      const p1i = s0i + s2i;
      const y1r = s1r + s3i;
      const y1i = s1i - s3r;
      const y2r = s0r - s2r;
      const y2i = s0i - s2i;
      const y3r = s1r - s3i;
      const y3i = s1i + s3r;
      const p3r = y1r * w1r - y1i * w1i;
      const p3i = y1r * w1i + y1i * w1r;
      const p5r = y2r * w2r - y2i * w2i;
      const p5i = y2r * w2i + y2i * w2r;
      const p7r = y3r * w3r - y3i * w3i;
      const p7i = y3r * w3i + y3i * w3r;
      // Radix 2 on the pairs (0, 1), (2, 3), (4, 5), (6, 7).
      data[o] = p0r + p1r;
      data[o + 1] = p0i + p1i;
      data[o + 2] = p0r - p1r;
      data[o + 3] = p0i - p1i;
      data[o + 4] = p2r + p3r;
      data[o + 5] = p2i + p3i;
      data[o + 6] = p2r - p3r;
      data[o + 7] = p2i - p3i;
      data[o + 8] = p4r + p5r;
      data[o + 9] = p4i + p5i;
      data[o + 10] = p4r - p5r;
      data[o + 11] = p4i - p5i;
      data[o + 12] = p6r + p7r;
      data[o + 13] = p6i + p7i;
      data[o + 14] = p6r - p7r;
      data[o + 15] = p6i - p7i;
    }
  }

  /** `peak`'s running best (value, position). */
  private best = -Infinity;
  private bestPos = -1;

  /** Keeps (v, p) when it beats the running best (on a tie, the smaller tie key; w = at + p). */
  private weigh(v: number, p: number, w: number, tie: Int32Array): void {
    if (v > this.best || (v === this.best && (tie[w] as number) < (tie[w - p + this.bestPos] as number))) {
      this.best = v;
      this.bestPos = p;
    }
  }

  /** `lastEight`, each output weighed for `peak` instead of stored. */
  private lastEightPeak(data: Float64Array, weight: Float64Array, tie: Int32Array, at: number): { value: number; pos: number } {
    this.best = -Infinity;
    this.bestPos = -1;
    const n = this.size;
    const t1 = 2 * (n / 8);
    const w1r = this.table[t1] as number;
    const w1i = this.table[t1 + 1] as number;
    const w2r = this.table[2 * t1] as number;
    const w2i = this.table[2 * t1 + 1] as number;
    const w3r = this.table[3 * t1] as number;
    const w3i = this.table[3 * t1 + 1] as number;
    for (let o = 0; o < 2 * n; o += 16) {
      // k = 0: a, b, c, d at 0, 2, 4, 6 (complex), twiddle 1.
      let ar = data[o] as number;
      let ai = data[o + 1] as number;
      let br = data[o + 4] as number;
      let bi = data[o + 5] as number;
      let cr = data[o + 8] as number;
      let ci = data[o + 9] as number;
      let dr = data[o + 12] as number;
      let di = data[o + 13] as number;
      let s0r = ar + cr;
      let s0i = ai + ci;
      let s1r = ar - cr;
      let s1i = ai - ci;
      let s2r = br + dr;
      let s2i = bi + di;
      let s3r = br - dr;
      let s3i = bi - di;
      const p0r = s0r + s2r;
      const p0i = s0i + s2i;
      const p2r = s1r + s3i;
      const p2i = s1i - s3r;
      const p4r = s0r - s2r;
      const p4i = s0i - s2i;
      const p6r = s1r - s3i;
      const p6i = s1i + s3r;
      // k = 1: a, b, c, d at 1, 3, 5, 7, twiddles W, W², W³.
      ar = data[o + 2] as number;
      ai = data[o + 3] as number;
      br = data[o + 6] as number;
      bi = data[o + 7] as number;
      cr = data[o + 10] as number;
      ci = data[o + 11] as number;
      dr = data[o + 14] as number;
      di = data[o + 15] as number;
      s0r = ar + cr;
      s0i = ai + ci;
      s1r = ar - cr;
      s1i = ai - ci;
      s2r = br + dr;
      s2i = bi + di;
      s3r = br - dr;
      s3i = bi - di;
      const p1r = s0r + s2r;
      const p1i = s0i + s2i;
      const y1r = s1r + s3i;
      const y1i = s1i - s3r;
      const y2r = s0r - s2r;
      const y2i = s0i - s2i;
      const y3r = s1r - s3i;
      const y3i = s1i + s3r;
      const p3r = y1r * w1r - y1i * w1i;
      const p3i = y1r * w1i + y1i * w1r;
      const p5r = y2r * w2r - y2i * w2i;
      const p5i = y2r * w2i + y2i * w2r;
      const p7r = y3r * w3r - y3i * w3i;
      const p7i = y3r * w3i + y3i * w3r;
      // Radix 2 on the pairs (0, 1), (2, 3), (4, 5), (6, 7), weighed instead of stored.
      const p = o >> 1;
      const w = at + p;
      let r = p0r + p1r;
      let m = p0i + p1i;
      this.weigh((r * r + m * m) * (weight[w] as number), p, w, tie);
      r = p0r - p1r;
      m = p0i - p1i;
      this.weigh((r * r + m * m) * (weight[w + 1] as number), p + 1, w + 1, tie);
      r = p2r + p3r;
      m = p2i + p3i;
      this.weigh((r * r + m * m) * (weight[w + 2] as number), p + 2, w + 2, tie);
      r = p2r - p3r;
      m = p2i - p3i;
      this.weigh((r * r + m * m) * (weight[w + 3] as number), p + 3, w + 3, tie);
      r = p4r + p5r;
      m = p4i + p5i;
      this.weigh((r * r + m * m) * (weight[w + 4] as number), p + 4, w + 4, tie);
      r = p4r - p5r;
      m = p4i - p5i;
      this.weigh((r * r + m * m) * (weight[w + 5] as number), p + 5, w + 5, tie);
      r = p6r + p7r;
      m = p6i + p7i;
      this.weigh((r * r + m * m) * (weight[w + 6] as number), p + 6, w + 6, tie);
      r = p6r - p7r;
      m = p6i - p7i;
      this.weigh((r * r + m * m) * (weight[w + 7] as number), p + 7, w + 7, tie);
    }
    return { value: this.best, pos: this.bestPos };
  }

  /** The first radix-4 stage (span n): inputs at and above `nz` read as 0. */
  private firstStage(data: Float64Array, nz: number): void {
    const n = this.size;
    const quarter = n / 4;
    const table = this.table;
    for (let k = 0; k < quarter; k++) {
      const ia = 2 * k;
      const ib = ia + 2 * quarter;
      const ic = ib + 2 * quarter;
      const id = ic + 2 * quarter;
      const ar = k < nz ? (data[ia] as number) : 0;
      const ai = k < nz ? (data[ia + 1] as number) : 0;
      const br = k + quarter < nz ? (data[ib] as number) : 0;
      const bi = k + quarter < nz ? (data[ib + 1] as number) : 0;
      const cr = k + 2 * quarter < nz ? (data[ic] as number) : 0;
      const ci = k + 2 * quarter < nz ? (data[ic + 1] as number) : 0;
      const dr = k + 3 * quarter < nz ? (data[id] as number) : 0;
      const di = k + 3 * quarter < nz ? (data[id + 1] as number) : 0;
      const t1 = 2 * k;
      const s0r = ar + cr;
      const s0i = ai + ci;
      const s1r = ar - cr;
      const s1i = ai - ci;
      const s2r = br + dr;
      const s2i = bi + di;
      const s3r = br - dr;
      const s3i = bi - di;
      data[ia] = s0r + s2r;
      data[ia + 1] = s0i + s2i;
      // y1 = s1 − i·s3, y2 = s0 − s2, y3 = s1 + i·s3, each times its twiddle.
      const y1r = s1r + s3i;
      const y1i = s1i - s3r;
      const y2r = s0r - s2r;
      const y2i = s0i - s2i;
      const y3r = s1r - s3i;
      const y3i = s1i + s3r;
      const w1r = table[t1] as number;
      const w1i = table[t1 + 1] as number;
      const w2r = table[2 * t1] as number;
      const w2i = table[2 * t1 + 1] as number;
      const w3r = table[3 * t1] as number;
      const w3i = table[3 * t1 + 1] as number;
      data[ib] = y1r * w1r - y1i * w1i;
      data[ib + 1] = y1r * w1i + y1i * w1r;
      data[ic] = y2r * w2r - y2i * w2i;
      data[ic + 1] = y2r * w2i + y2i * w2r;
      data[id] = y3r * w3r - y3i * w3i;
      data[id + 1] = y3r * w3i + y3i * w3r;
    }
  }

  /** A radix-4 stage of span `len` ≥ 8 over every group. */
  private stage(data: Float64Array, len: number): void {
    const n = this.size;
    const quarter = len / 4;
    const tStep = n / len;
    const table = this.table;
    for (let k = 0; k < quarter; k++) {
      // The twiddles of this k serve every group.
      const t1 = 2 * k * tStep;
      const w1r = table[t1] as number;
      const w1i = table[t1 + 1] as number;
      const w2r = table[2 * t1] as number;
      const w2i = table[2 * t1 + 1] as number;
      const w3r = table[3 * t1] as number;
      const w3i = table[3 * t1 + 1] as number;
      for (let g = 0; g < n; g += len) {
        const ia = 2 * (g + k);
        const ib = ia + 2 * quarter;
        const ic = ib + 2 * quarter;
        const id = ic + 2 * quarter;
        const ar = data[ia] as number;
        const ai = data[ia + 1] as number;
        const br = data[ib] as number;
        const bi = data[ib + 1] as number;
        const cr = data[ic] as number;
        const ci = data[ic + 1] as number;
        const dr = data[id] as number;
        const di = data[id + 1] as number;
        const s0r = ar + cr;
        const s0i = ai + ci;
        const s1r = ar - cr;
        const s1i = ai - ci;
        const s2r = br + dr;
        const s2i = bi + di;
        const s3r = br - dr;
        const s3i = bi - di;
        data[ia] = s0r + s2r;
        data[ia + 1] = s0i + s2i;
        // y1 = s1 − i·s3, y2 = s0 − s2, y3 = s1 + i·s3, each times its twiddle.
        const y1r = s1r + s3i;
        const y1i = s1i - s3r;
        const y2r = s0r - s2r;
        const y2i = s0i - s2i;
        const y3r = s1r - s3i;
        const y3i = s1i + s3r;
        data[ib] = y1r * w1r - y1i * w1i;
        data[ib + 1] = y1r * w1i + y1i * w1r;
        data[ic] = y2r * w2r - y2i * w2i;
        data[ic + 1] = y2r * w2i + y2i * w2r;
        data[id] = y3r * w3r - y3i * w3i;
        data[id + 1] = y3r * w3i + y3i * w3r;
      }
    }
  }
}
