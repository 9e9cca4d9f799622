/**
 * Instrument response from FDSN StationXML for local magnitude: every stage's gain and poles and
 * zeros, the input unit (m/s, nm/s, m/s², m, …), and the removal of the response to ground
 * displacement combined with the Wood-Anderson simulation in one pass in the frequency domain.
 *
 * StationXML conventions (FDSN StationXML 1.2 reference, "Response" and "Stage"; SEED manual 2.4,
 * blockettes 53 and 58; common practice): a stage's transfer function is its StageGain times its
 * normalised filter, the PolesZeros filter being A0·Π(s − zₖ)/Π(s − pₖ) with s = i·2πf for
 * "LAPLACE (RADIANS/SECOND)" and s = i·f with roots in Hz for "LAPLACE (HERTZ)"; the channel's
 * response is the product of its stages, from the ground (stage 1's input unit) to counts.
 * The StageGain holds at its own frequency, so each poles-and-zeros filter is scaled to
 * |A0·PAZ| = 1 at that frequency (the A0 stated for another frequency cannot make it wrong).
 * Digital stages (Coefficients, FIR) enter as their gain: an anti-alias FIR is flat in its pass band,
 * which is where the Wood-Anderson band (around 1.25 Hz) lies (a note says so).
 */
import { z } from 'zod';
import { filterBySpectrum, paddedSize } from './spectral-filter';
import { WOOD_ANDERSON, type Complex } from './wood-anderson';

/** What a stage of the response needs for the calculation (a subset of server/formats StationXML `ResponseStage`). */
export interface ResponseStageInput {
  number: number;
  kind: 'PolesZeros' | 'Coefficients' | 'FIR' | 'ResponseList' | 'Polynomial' | 'Gain';
  inputUnits?: string | undefined;
  outputUnits?: string | undefined;
  paz?:
    | {
        transferFunctionType: string;
        normalizationFactor: number;
        normalizationFrequencyHz: number;
        zeros: readonly Complex[];
        poles: readonly Complex[];
      }
    | undefined;
  gain?: { value: number; frequencyHz: number } | undefined;
}

/** A channel's response information (the StationXML channel's InstrumentSensitivity and stages). */
export interface ChannelResponseInput {
  id: string;
  sensitivity?: { value: number; frequencyHz: number; inputUnits: string; outputUnits: string } | undefined;
  stages: readonly ResponseStageInput[];
}

/** The ground motion a response starts from. */
export type GroundQuantity = 'displacement' | 'velocity' | 'acceleration';

/** A usable response: counts per SI ground unit as a product of poles-and-zeros filters and a gain. */
export interface InstrumentResponse {
  /** Ground quantity of the input unit. */
  quantity: GroundQuantity;
  /** The input unit as stated (e.g. `nm/s`). */
  inputUnits: string;
  /** SI units per stated input unit (1e-9 for nm/s): the stated response ÷ this is counts per SI unit. */
  siPerInputUnit: number;
  /** The poles-and-zeros filters, roots in rad/s, each normalised to |A0·PAZ| = 1 at its stage gain's frequency. */
  filters: ReadonlyArray<{ zeros: readonly Complex[]; poles: readonly Complex[]; a0: number }>;
  /** Product of every stage's gain, counts per stated input unit. */
  gain: number;
  /** What was assumed or found while reading the response, in words. */
  notes: string[];
}

/** The outcome of reading a response: usable, or refused with the reason in words. */
export type ResponseResult = { ok: true; response: InstrumentResponse } | { ok: false; reason: string };

/** Ground units understood, lower case, spaces removed → quantity and SI scale (common practice spellings in StationXML). */
const UNITS: Record<string, { quantity: GroundQuantity; scale: number }> = {};
for (const [prefix, scale] of [['', 1], ['c', 1e-2], ['m', 1e-3], ['u', 1e-6], ['µ', 1e-6], ['micro', 1e-6], ['n', 1e-9]] as const) {
  UNITS[`${prefix}m`] = { quantity: 'displacement', scale };
  UNITS[`${prefix}m/s`] = { quantity: 'velocity', scale };
  UNITS[`${prefix}m/sec`] = { quantity: 'velocity', scale };
  for (const sq of ['s**2', 's^2', 's2', 's²', '(s**2)', 'sec**2', 'sec^2', 'sec2']) UNITS[`${prefix}m/${sq}`] = { quantity: 'acceleration', scale };
}
UNITS.meters = { quantity: 'displacement', scale: 1 };

/** Ground quantity and SI scale of a StationXML unit name, or null when it is not a ground motion unit. */
export function groundUnit(name: string): { quantity: GroundQuantity; scale: number } | null {
  return UNITS[name.trim().toLowerCase().replace(/\s+/gu, '')] ?? null;
}

const isCounts = (u: string | undefined): boolean => u !== undefined && /^(counts?|digital counts?|du)$/iu.test(u.trim());

/** |A0·Π(s − z)/Π(s − p)| at f Hz, roots rad/s. */
function pazAbs(zeros: readonly Complex[], poles: readonly Complex[], a0: number, frequencyHz: number): number {
  const w = 2 * Math.PI * frequencyHz;
  let v = Math.abs(a0);
  for (const z of zeros) v *= Math.hypot(z.re, w - z.im);
  for (const p of poles) v /= Math.hypot(p.re, w - p.im);
  return v;
}

/**
 * Reads a channel's response for ML. Refuses, with the reason, when: there are no stages; a stage is
 * a ResponseList or Polynomial (no poles and zeros to evaluate); a PolesZeros stage is a digital
 * (z-transform) one or gives no response at its gain frequency; a stage has no StageGain or a gain of
 * 0; there is no PolesZeros stage (the response shape is unknown); the first stage's input unit is
 * not a ground motion (m, m/s, m/s² with the prefixes c, m, u/µ, n); the last stage's output is not
 * counts. Notes: digital stages taken as their gain; units of consecutive stages that do not chain;
 * an A0 that does not normalise its filter; a stated InstrumentSensitivity that differs from the
 * stages' product by more than 5 %.
 */
export function responseFromStages(channel: ChannelResponseInput): ResponseResult {
  const at = channel.id;
  const stages = [...channel.stages].sort((a, b) => a.number - b.number);
  if (stages.length === 0) return { ok: false, reason: `${at}: the StationXML gives no response stages (an overall sensitivity alone does not say how the instrument responds across frequencies)` };
  const notes: string[] = [];
  const filters: { zeros: Complex[]; poles: Complex[]; a0: number }[] = [];
  let gain = 1;
  let digital = 0;
  for (const st of stages) {
    const where = `${at} stage ${st.number}`;
    if (st.kind === 'ResponseList' || st.kind === 'Polynomial') return { ok: false, reason: `${where} is a ${st.kind} stage: its response cannot be evaluated from poles and zeros` };
    if (!st.gain) return { ok: false, reason: `${where} has no StageGain` };
    if (!(Math.abs(st.gain.value) > 0) || !Number.isFinite(st.gain.value)) return { ok: false, reason: `${where} has a StageGain of ${st.gain.value}` };
    gain *= st.gain.value;
    if (st.kind === 'PolesZeros') {
      const paz = st.paz;
      if (!paz) return { ok: false, reason: `${where}: PolesZeros without poles and zeros` };
      if (/DIGITAL/iu.test(paz.transferFunctionType)) return { ok: false, reason: `${where}: a digital (z-transform) PolesZeros stage is not supported` };
      const k = /HERTZ/iu.test(paz.transferFunctionType) ? 2 * Math.PI : 1;
      const zeros = paz.zeros.map((z) => ({ re: z.re * k, im: z.im * k }));
      const poles = paz.poles.map((p) => ({ re: p.re * k, im: p.im * k }));
      // A0 in rad/s terms: A0_rad = A0_Hz · (2π)^(np − nz) (SEED manual 2.4, blockette 53).
      const a0Stated = paz.normalizationFactor * Math.pow(k, poles.length - zeros.length);
      const atNorm = pazAbs(zeros, poles, a0Stated, paz.normalizationFrequencyHz);
      if (Number.isFinite(atNorm) && Math.abs(atNorm - 1) > 0.02) notes.push(`${where}: A0 ${paz.normalizationFactor} gives |A0·H| = ${atNorm.toPrecision(4)} at ${paz.normalizationFrequencyHz} Hz, not 1; the filter was normalised at the stage gain's frequency instead`);
      const unit = pazAbs(zeros, poles, 1, st.gain.frequencyHz);
      if (!(unit > 0) || !Number.isFinite(unit)) return { ok: false, reason: `${where}: the poles and zeros give no response at the gain frequency ${st.gain.frequencyHz} Hz` };
      filters.push({ zeros, poles, a0: 1 / unit });
    } else if (st.kind === 'Coefficients' || st.kind === 'FIR') digital += 1;
  }
  if (filters.length === 0) return { ok: false, reason: `${at}: no PolesZeros stage, so the instrument's response across frequencies is unknown` };
  if (digital > 0) notes.push(`${at}: ${digital} digital stage${digital === 1 ? '' : 's'} taken as ${digital === 1 ? 'its gain' : 'their gains'} (flat in the pass band)`);
  for (let i = 1; i < stages.length; i++) {
    const a = stages[i - 1]?.outputUnits;
    const b = stages[i]?.inputUnits;
    if (a && b && a.trim().toLowerCase() !== b.trim().toLowerCase()) notes.push(`${at}: stage ${stages[i - 1]?.number} puts out ${a} but stage ${stages[i]?.number} takes ${b}`);
  }
  const first = stages[0] as ResponseStageInput;
  const inputUnits = first.inputUnits ?? channel.sensitivity?.inputUnits;
  if (inputUnits === undefined) return { ok: false, reason: `${at}: the first stage names no input unit` };
  const unit = groundUnit(inputUnits);
  if (!unit) return { ok: false, reason: `${at}: input unit '${inputUnits.slice(0, 40)}' is not a ground motion (m, m/s or m/s², with prefixes c, m, u, n)` };
  const lastOut = stages[stages.length - 1]?.outputUnits ?? channel.sensitivity?.outputUnits;
  if (lastOut !== undefined && !isCounts(lastOut)) return { ok: false, reason: `${at}: the last stage puts out '${lastOut.slice(0, 40)}', not counts` };
  const response: InstrumentResponse = { quantity: unit.quantity, inputUnits, siPerInputUnit: unit.scale, filters, gain, notes };
  const s = channel.sensitivity;
  if (s && s.value > 0) {
    const product = responseAbs(response, s.frequencyHz);
    if (Math.abs(product / s.value - 1) > 0.05) {
      notes.push(`${at}: the stages give ${product.toPrecision(5)} counts per ${inputUnits} at ${s.frequencyHz} Hz, the InstrumentSensitivity says ${s.value.toPrecision(5)}; the stages are used`);
    }
  }
  return { ok: true, response };
}

const complexSchema = z.object({ re: z.number(), im: z.number() });

/**
 * The response stages as the station registry keeps them beside the channel's first poles and zeros
 * (the `stages` field of its response JSON, written by the StationXML import): what
 * {@link responseFromStages} reads, checked at the edge where it comes back from the database.
 */
export const registryStagesSchema = z
  .array(
    z.object({
      number: z.number().int(),
      kind: z.enum(['PolesZeros', 'Coefficients', 'FIR', 'ResponseList', 'Polynomial', 'Gain']),
      inputUnits: z.string().max(100).optional(),
      outputUnits: z.string().max(100).optional(),
      paz: z
        .object({
          transferFunctionType: z.string().max(40),
          normalizationFactor: z.number(),
          normalizationFrequencyHz: z.number(),
          zeros: z.array(complexSchema).max(64),
          poles: z.array(complexSchema).max(64),
        })
        .optional(),
      gain: z.object({ value: z.number(), frequencyHz: z.number() }).optional(),
    }),
  )
  .max(64);

/** The stages of a parsed StationXML channel reduced to what the registry keeps for ML (see {@link registryStagesSchema}). */
export function registryStages(stages: readonly ResponseStageInput[]): z.infer<typeof registryStagesSchema> {
  return stages.map((st) => ({
    number: st.number,
    kind: st.kind,
    ...(st.inputUnits === undefined ? {} : { inputUnits: st.inputUnits.slice(0, 100) }),
    ...(st.outputUnits === undefined ? {} : { outputUnits: st.outputUnits.slice(0, 100) }),
    ...(st.paz
      ? { paz: { transferFunctionType: st.paz.transferFunctionType, normalizationFactor: st.paz.normalizationFactor, normalizationFrequencyHz: st.paz.normalizationFrequencyHz, zeros: st.paz.zeros.map((c) => ({ re: c.re, im: c.im })), poles: st.paz.poles.map((c) => ({ re: c.re, im: c.im })) } }
      : {}),
    ...(st.gain ? { gain: { value: st.gain.value, frequencyHz: st.gain.frequencyHz } } : {}),
  }));
}

/** A registry response JSON with the channel's StationXML stages beside it (null stays null: nothing to read ML from). */
export function withRegistryStages<T extends object>(response: T | null, stages: readonly ResponseStageInput[]): (T & { stages: z.infer<typeof registryStagesSchema> }) | null {
  return response === null ? null : { ...response, stages: registryStages(stages) };
}

/** What the station registry holds for a channel's response (the channels table's columns). */
export interface RegistryChannelResponse {
  /** The response JSON: the first poles and zeros (rad/s) with the sensitivity, and `stages` when imported from StationXML. */
  response: unknown;
  sensitivity: number | null;
  sensitivityFrequencyHz: number | null;
  sensitivityInputUnits: string | null;
}

const registryPazSchema = z.object({ zeros: z.array(complexSchema).max(64), poles: z.array(complexSchema).max(64), stages: registryStagesSchema.optional() });

/**
 * The response for ML of a channel in the station registry. With the StationXML stages stored
 * (every import keeps them) it is {@link responseFromStages} on them, the same reading as
 * `npm run -s locate` does from the file: every stage gain, each poles-and-zeros stage, the input unit
 * (m/s, nm/s, m/s², …), refused with the reason where a stage cannot be used. A channel entered by
 * hand (one poles-and-zeros filter and a sensitivity) is read with {@link responseFromSensitivity},
 * and a note says so. Refused, with the reason, without poles and zeros or sensitivity.
 */
export function responseFromRegistry(id: string, ch: RegistryChannelResponse): ResponseResult {
  const stored = registryPazSchema.safeParse(ch.response);
  if (!stored.success) return { ok: false, reason: `${id}: the registry holds no poles and zeros for it (${ch.sensitivity === null ? 'nor a sensitivity' : 'only a flat sensitivity'}); import a StationXML with its poles and zeros and InstrumentSensitivity for ML` };
  // The registry keeps sensitivities in counts per input unit (its output unit is not stored).
  const sensitivity =
    ch.sensitivity !== null && ch.sensitivityInputUnits !== null ? { value: ch.sensitivity, frequencyHz: ch.sensitivityFrequencyHz ?? 1, inputUnits: ch.sensitivityInputUnits, outputUnits: 'counts' } : undefined;
  if (stored.data.stages && stored.data.stages.length > 0) return responseFromStages({ id, sensitivity, stages: stored.data.stages });
  if (!sensitivity) return { ok: false, reason: `${id}: the registry holds no sensitivity or no input unit` };
  const r = responseFromSensitivity(id, stored.data, sensitivity.value, sensitivity.frequencyHz, sensitivity.inputUnits);
  if (r.ok) r.response.notes.push(`${id}: the registry holds one poles-and-zeros filter and the overall sensitivity (no stages): import the station's StationXML for every stage`);
  return r;
}

/**
 * A response from one poles-and-zeros filter (rad/s) and an overall sensitivity S at f_s, the form the
 * station registry keeps: H(f) = S·PAZ(f)/|PAZ(f_s)|, input unit as given.
 */
export function responseFromSensitivity(
  id: string,
  paz: { zeros: readonly Complex[]; poles: readonly Complex[] },
  sensitivity: number,
  sensitivityFrequencyHz: number,
  inputUnits: string,
): ResponseResult {
  const unit = groundUnit(inputUnits);
  if (!unit) return { ok: false, reason: `${id}: input unit '${inputUnits.slice(0, 40)}' is not a ground motion (m, m/s or m/s², with prefixes c, m, u, n)` };
  if (!(sensitivity > 0) || !Number.isFinite(sensitivity)) return { ok: false, reason: `${id}: the sensitivity ${sensitivity} is not a positive number` };
  const u = pazAbs(paz.zeros, paz.poles, 1, sensitivityFrequencyHz);
  if (!(u > 0) || !Number.isFinite(u)) return { ok: false, reason: `${id}: the poles and zeros give no response at ${sensitivityFrequencyHz} Hz` };
  return {
    ok: true,
    response: { quantity: unit.quantity, inputUnits, siPerInputUnit: unit.scale, filters: [{ zeros: [...paz.zeros], poles: [...paz.poles], a0: 1 / u }], gain: sensitivity, notes: [] },
  };
}

/**
 * The complex response H(f), counts per stated input unit: gain · Π A0·Π(s − z)/Π(s − p), s = i·2πf.
 */
export function responseAt(r: InstrumentResponse, frequencyHz: number): Complex {
  const w = 2 * Math.PI * frequencyHz;
  let re = r.gain;
  let im = 0;
  // Plain loops, no closure: this runs once per frequency bin of every channel.
  for (const f of r.filters) {
    re *= f.a0;
    im *= f.a0;
    for (const z of f.zeros) {
      // × (iw − z)
      const ar = -z.re;
      const ai = w - z.im;
      const t = re * ar - im * ai;
      im = re * ai + im * ar;
      re = t;
    }
    for (const p of f.poles) {
      // ÷ (iw − p) = × conj(iw − p)/|iw − p|²
      const ar = -p.re;
      const ai = w - p.im;
      const d = ar * ar + ai * ai;
      const t = (re * ar + im * ai) / d;
      im = (im * ar - re * ai) / d;
      re = t;
    }
  }
  return { re, im };
}

/** |H(f)|, counts per stated input unit. */
export function responseAbs(r: InstrumentResponse, frequencyHz: number): number {
  const h = responseAt(r, frequencyHz);
  return Math.hypot(h.re, h.im);
}

/** The pre-filter of the deconvolution: a cosine taper 0 → 1 over [f1, f2] and 1 → 0 over [f3, f4], Hz. */
export interface PreFilter {
  f1: number;
  f2: number;
  f3: number;
  f4: number;
}

/**
 * Default pre-filter for fs: 0.05–0.1 Hz up, 0.8–0.9 × Nyquist down (our own choice: the
 * Wood-Anderson passes nothing useful below 0.1 Hz, and the division by the sensor's response there
 * would only amplify noise; common practice to taper both ends).
 */
export function defaultPreFilter(sampleRateHz: number): PreFilter {
  const nyq = sampleRateHz / 2;
  return { f1: 0.05, f2: 0.1, f3: 0.8 * nyq, f4: 0.9 * nyq };
}

function taperAt(f: number, p: PreFilter): number {
  if (f <= p.f1 || f >= p.f4) return 0;
  if (f < p.f2) return 0.5 * (1 - Math.cos((Math.PI * (f - p.f1)) / (p.f2 - p.f1)));
  if (f > p.f3) return 0.5 * (1 + Math.cos((Math.PI * (f - p.f3)) / (p.f4 - p.f3)));
  return 1;
}

/** Seconds of decay padded after the trace (as wood-anderson.ts: the instrument's memory is below 10⁻¹² after 5 s). */
const TAIL_S = 5;

/**
 * The counts checked (≥ 2 samples, a rate > 0 Hz, pre-filter corners that rise), then with their mean
 * and least-squares line through (i, x_i) removed and a 5 % cosine taper at each end (Tukey α = 0.1,
 * common practice before a deconvolution), zero-padded to size = a power of two ≥ n + 5 s·fs.
 * @throws RangeError naming `what` for a short trace, a bad rate or pre-filter, or a sample that is not a finite number
 */
function prepareForDeconvolution(counts: Float64Array, sampleRateHz: number, preFilter: PreFilter, what: string): { n: number; size: number; x: Float64Array } {
  const n = counts.length;
  if (n < 2) throw new RangeError(`${what}: the trace needs at least 2 samples`);
  if (!(sampleRateHz > 0) || !Number.isFinite(sampleRateHz)) throw new RangeError(`${what}: sample rate must be > 0 Hz, got ${sampleRateHz}`);
  const { f1, f2, f3, f4 } = preFilter;
  if (!(0 <= f1 && f1 < f2 && f2 <= f3 && f3 < f4)) throw new RangeError(`${what}: pre-filter corners must rise, got ${f1}, ${f2}, ${f3}, ${f4} Hz`);
  const size = paddedSize(n, sampleRateHz, TAIL_S);
  let sx = 0;
  let sxy = 0;
  for (let i = 0; i < n; i++) {
    const v = counts[i] as number;
    if (!Number.isFinite(v)) throw new RangeError(`${what}: sample ${i} is not a finite number`);
    sx += v;
    sxy += i * v;
  }
  const mi = (n - 1) / 2;
  const my = sx / n;
  const sii = (n * (n * n - 1)) / 12;
  const slope = (sxy - n * mi * my) / sii;
  const x = new Float64Array(size);
  const taperN = Math.max(1, Math.floor(0.05 * n));
  for (let i = 0; i < n; i++) {
    const edge = Math.min(i, n - 1 - i);
    const w = edge < taperN ? 0.5 * (1 - Math.cos((Math.PI * edge) / taperN)) : 1;
    x[i] = ((counts[i] as number) - my - slope * (i - mi)) * w;
  }
  return { n, size, x };
}

/**
 * Wood-Anderson trace in mm from raw counts: the mean and the least-squares line removed, a 5 % cosine
 * taper at each end (Tukey α = 0.1, common practice before a deconvolution), zero padding to a power
 * of two N ≥ n + 5 s·fs, then bin by bin
 *   WA(f) = X(f) · pre(f) · H_WA,d(f) / (H(f)/u · (i2πf)^k) · 1000,
 * X the counts' DFT, H the instrument response (counts per stated unit), u the SI size of the stated
 * unit, k = 0, 1, 2 for displacement, velocity, acceleration input (D = V/(iω) = A/(iω)²), H_WA,d the
 * Wood-Anderson displacement response G·s²/(s² + 2hω₀s + ω₀²) (Uhrhammer & Collins 1990), pre the
 * cosine pre-filter. Bins where H is 0 are set to 0. Pure; the input is not modified.
 * @throws RangeError for an empty trace, a rate that is not > 0, a non-finite sample or a bad pre-filter.
 */
export function woodAndersonFromCounts(counts: Float64Array, sampleRateHz: number, response: InstrumentResponse, preFilter: PreFilter = defaultPreFilter(sampleRateHz)): Float64Array {
  const w0 = (2 * Math.PI) / WOOD_ANDERSON.naturalPeriodS;
  const twoHw0 = 2 * WOOD_ANDERSON.damping * w0;
  const g = WOOD_ANDERSON.staticMagnification;
  const power = response.quantity === 'displacement' ? 0 : response.quantity === 'velocity' ? 1 : 2;
  // Wood-Anderson displacement response: −Gω² / ((ω₀² − ω²) + i·2hω₀ω), in mm (× 1000 mm/m).
  const woodAnderson = (w: number): [number, number] => {
    const dr = w0 * w0 - w * w;
    const di = twoHw0 * w;
    const den = dr * dr + di * di;
    return [(-g * w * w * dr) / den, (g * w * w * di) / den];
  };
  return deconvolve(counts, sampleRateHz, response, preFilter, 'Wood-Anderson from counts', power, woodAnderson, 1000);
}

/** The ground motion a response removal gives. */
export type RemovalOutput = 'velocity' | 'displacement';

/**
 * Ground velocity (m/s) or displacement (m) from raw counts, for DISPLAY: the same preparation as
 * `woodAndersonFromCounts` (mean and least-squares line removed, 5 % cosine taper at each end, zero
 * padding to a power of two N ≥ n + 5 s·fs), then bin by bin
 *   G(f) = X(f) · pre(f) / (H(f)/u · (i2πf)^(k_in − k_out)),
 * X the counts' DFT, H the response (counts per stated unit), u the SI size of the stated unit,
 * k = 0, 1, 2 for displacement, velocity, acceleration (V = iω·D, A = iω·V; the definition of the
 * transfer function, common practice), pre the cosine pre-filter that keeps the division from
 * amplifying noise where H is small. Bins where H is 0 are set to 0. Pure; the input is not modified.
 * The magnitude and ML never read it (they use `woodAndersonFromCounts`).
 * @throws RangeError for an empty trace, a rate that is not > 0, a non-finite sample or a bad pre-filter.
 */
export function groundMotionFromCounts(counts: Float64Array, sampleRateHz: number, response: InstrumentResponse, output: RemovalOutput, preFilter: PreFilter = defaultPreFilter(sampleRateHz)): Float64Array {
  const kIn = response.quantity === 'displacement' ? 0 : response.quantity === 'velocity' ? 1 : 2;
  return deconvolve(counts, sampleRateHz, response, preFilter, 'response removal', kIn - (output === 'displacement' ? 0 : 1), () => [1, 0], 1);
}

/**
 * The deconvolution both of the above share: the counts prepared (`prepareForDeconvolution`), then
 * bin by bin T(f) = target(ω) / (H(f)/u · (iω)^power) · pre(f) · scale, ω = 2πf, H the response
 * (counts per stated unit), u the SI size of its unit; power may be negative (÷ iω, and 0 at ω = 0).
 * Bins where H is 0 or the pre-filter is 0 are set to 0. Pure.
 */
function deconvolve(
  counts: Float64Array,
  sampleRateHz: number,
  response: InstrumentResponse,
  preFilter: PreFilter,
  what: string,
  power: number,
  target: (w: number) => [number, number],
  scale: number,
): Float64Array {
  const { n, size, x } = prepareForDeconvolution(counts, sampleRateHz, preFilter, what);
  const half = size / 2;
  const hr = new Float64Array(half + 1);
  const hi = new Float64Array(half + 1);
  for (let k = 0; k <= half; k++) {
    const f = (k * sampleRateHz) / size;
    const taper = taperAt(f, preFilter);
    if (!(taper > 0)) continue;
    const w = 2 * Math.PI * f;
    const h = responseAt(response, f);
    let ir = h.re / response.siPerInputUnit;
    let ii = h.im / response.siPerInputUnit;
    // × (iω)^power; a negative power (a displacement sensor shown as velocity) divides by iω.
    for (let p = 0; p < Math.abs(power); p++) {
      if (power > 0) {
        const t = -ii * w;
        ii = ir * w;
        ir = t;
      } else if (w > 0) {
        const t = ii / w;
        ii = -ir / w;
        ir = t;
      } else {
        ir = 0;
        ii = 0;
      }
    }
    const id = ir * ir + ii * ii;
    if (id > 0 && Number.isFinite(id)) {
      const [er, ei] = target(w);
      // (target / I) · taper · scale
      hr[k] = ((er * ir + ei * ii) / id) * taper * scale;
      hi[k] = ((ei * ir - er * ii) / id) * taper * scale;
    }
  }
  return filterBySpectrum(x, n, hr, hi);
}
