/**
 * Types for the parts of fili 2.0.3 (no bundled types) that Seisift uses: `IirFilter` running given
 * biquad sections (used by the engine benchmark to compare against our own sosfilt loop).
 */
declare module 'fili' {
  /**
   * One biquad: k·(b0 + b1 z⁻¹ + b2 z⁻²)/(1 + a1 z⁻¹ + a2 z⁻²), with `a = [a1, a2]`, `b = [b0, b1, b2]`
   * (direct form II; the filter keeps its state between calls).
   */
  export interface FiliBiquad {
    k: number;
    a: [number, number];
    b: [number, number, number];
  }

  /** An IIR filter made of cascaded biquads; it keeps state between calls (`reinit` clears it). */
  export class IirFilter {
    constructor(sections: FiliBiquad[]);
    /** Filter one sample. */
    singleStep(input: number): number;
    /** Filter a sequence; with `overwrite` the input array is reused for the output. */
    multiStep(input: ArrayLike<number>, overwrite?: boolean): number[];
    /** Clear the internal state. */
    reinit(): void;
  }

  const fili: { IirFilter: typeof IirFilter };
  export default fili;
}
