/**
 * An in-place complex DFT for the similarity coarse pass, where only the magnitudes of some outputs
 * are wanted and the upper inputs are zero: radix-4 decimation in frequency (a radix-2 stage last
 * when log2 n is odd), natural-order input, outputs left in digit-reversed order (`order` says which
 * output each position holds), so no permutation pass is made. Inputs at and above `nonZero` are
 * set to 0 first (the band's bins fill only part of the transform). One radix-4 stage serves every
 * span; its peak search reads the outputs in one pass after the transform.
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
    data.fill(0, 2 * nz, 2 * n);
    let len = n;
    for (; len >= 4; len /= 4) this.stage(data, len);
    if (len === 2) {
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
   * `transform`, `data` is overwritten), and that value; on equal values the smaller `tie[at + p]`.
   * Positions whose weight is NaN are never chosen (value −∞ and position −1 when none can be).
   */
  peak(data: Float64Array, nonZero: number, weight: Float64Array, tie: Int32Array, at = 0): { value: number; pos: number } {
    this.transform(data, nonZero);
    let value = -Infinity;
    let pos = -1;
    for (let p = 0; p < this.size; p++) {
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

  /** A radix-4 stage of span `len` ≥ 4 over every group (twiddles W^k, W^2k, W^3k, W = e^{−2πi/len}). */
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
