/**
 * Travel times of P and S in a 1-D model of flat layers (velocity-model.ts) from a source at depth to
 * a receiver at the surface: the direct wave and the head wave along every interface below the source,
 * the first arrival among them, and the derivatives Geiger's method needs.
 *
 * Flat layers: the epicentral distance is used as a flat horizontal distance (no Earth-flattening);
 * at a few hundred km the curvature error stays small against the model's own uncertainty (common
 * practice for local and regional networks). Reflections are not computed: a reflection from an
 * interface never beats the direct wave, which takes the fastest path above it (Fermat's principle),
 * so the first arrival is always a direct or a head wave.
 *
 * Ray theory in flat layers (e.g. Shearer, "Introduction to Seismology", 2nd ed. 2009, ch. 4, the
 * layered-model X(p), T(p) and τ(p) relations; Lay & Wallace, "Modern Global Seismology" 1995, ch. 3 —
 * both cited from memory, equation numbers not verified): with ray parameter p (s/km) and vertical
 * slowness η_i = √(1/v_i² − p²) in layer i of thickness h_i,
 *   X(p) = Σ h_i · p v_i / √(1 − p² v_i²),   T(p) = p·X + Σ h_i η_i.
 * Units: km, km/s, s, s/km throughout.
 */
import { validateVelocityModel, type VelocityModel, type WaveType } from './velocity-model';

/** A validated model unpacked into arrays for fast evaluation (build once with `prepareVelocityModel`). */
export interface PreparedVelocityModel {
  readonly model: VelocityModel;
  /** Layer tops, km. */
  readonly topsKm: Float64Array;
  /** P speeds, km/s. */
  readonly vpKmS: Float64Array;
  /** S speeds, km/s. */
  readonly vsKmS: Float64Array;
}

/** One arrival of one wave type at one distance and source depth. */
export interface Arrival {
  /**
   * Phase name: `Pg`/`Sg` the direct wave from a source above the half-space, `P`/`S` the direct wave
   * from a source in the half-space (or in a one-layer model), `Pn`/`Sn` the head wave along the top
   * of the half-space (the model's deepest interface, taken as the Moho), `P_L<i>`/`S_L<i>` the head
   * wave along the top of layer index i (0 = the surface layer) for the interfaces in between.
   */
  phase: string;
  wave: WaveType;
  kind: 'direct' | 'head';
  /** Index of the refracting layer for a head wave, null for the direct wave. */
  refractorIndex: number | null;
  /** Travel time, s. */
  timeS: number;
  /** Ray parameter p = ∂T/∂x, s/km. */
  rayParameterSPerKm: number;
  /** ∂T/∂x at fixed depth, s/km (= p). */
  dtdDistanceSPerKm: number;
  /** ∂T/∂z at fixed distance, s/km (depth positive down). */
  dtdDepthSPerKm: number;
  /** Take-off angle at the source from the downward vertical, degrees (0 down, 90 horizontal, 180 up). */
  takeoffAngleDeg: number;
}

/**
 * Validates a model and unpacks it for `directWave`, `headWaves`, `allArrivals`, `firstArrival`.
 * @throws RangeError from `validateVelocityModel`.
 */
export function prepareVelocityModel(model: VelocityModel): PreparedVelocityModel {
  validateVelocityModel(model);
  return {
    model,
    topsKm: Float64Array.from(model.layers, (l) => l.topKm),
    vpKmS: Float64Array.from(model.layers, (l) => l.vpKmS),
    vsKmS: Float64Array.from(model.layers, (l) => l.vsKmS),
  };
}

function checkGeometry(distanceKm: number, depthKm: number): void {
  if (!Number.isFinite(distanceKm) || distanceKm < 0) throw new RangeError(`travel time: distance must be a finite number ≥ 0 km, got ${distanceKm}`);
  if (!Number.isFinite(depthKm) || depthKm < 0) throw new RangeError(`travel time: source depth must be a finite number ≥ 0 km (no sources above the surface), got ${depthKm}`);
}

const DEG = 180 / Math.PI;

/**
 * The direct (upgoing) wave from depth z to a surface receiver at distance x.
 * The source belongs to the layer with top < z ≤ bottom (a source on an interface counts in the layer
 * above, so ∂T/∂z is the derivative from above). The ray crosses layers 0…k with thicknesses
 * h_i (the source layer only from its top down to z); p is found from X(p) = x by Newton's method on
 * q = p·v_max ∈ [0, 1), safeguarded by bisection (X is increasing and convex in q, so the bracket
 * always holds the root), to |X − x| ≤ 10⁻¹² · max(1, x) km. Then
 * T = p·x + Σ h_i η_i (stationary in p, so a tiny error in p barely moves T), ∂T/∂x = p,
 * ∂T/∂z = η_k (vertical slowness at the source; Shearer 2009 ch. 4, τ-p relations, from memory).
 * Special cases: x = 0 (vertical ray, p = 0) and z = 0 (the wave runs along the surface, T = x/v₀).
 * @throws RangeError on a negative or non-finite distance or depth.
 */
export function directWave(m: PreparedVelocityModel, wave: WaveType, distanceKm: number, depthKm: number): Arrival {
  checkGeometry(distanceKm, depthKm);
  const v = wave === 'P' ? m.vpKmS : m.vsKmS;
  const k = sourceLayerFromAbove(m.topsKm, depthKm);
  const p = solveDirectRayParameter(v, m.topsKm, k, distanceKm, depthKm);
  const vk = v[k] as number;
  const pvk = Math.min(1, p * vk);
  // At z = 0 and x = 0 the ray is taken as vertical (∂T/∂z = 1/v₀), at z = 0 and x > 0 horizontal.
  const vertical = distanceKm === 0;
  return {
    phase: k === m.topsKm.length - 1 ? wave : `${wave}g`,
    wave,
    kind: 'direct',
    refractorIndex: null,
    timeS: directTime(v, m.topsKm, k, distanceKm, depthKm, p),
    rayParameterSPerKm: p,
    dtdDistanceSPerKm: p,
    dtdDepthSPerKm: vertical ? 1 / vk : Math.sqrt((1 - pvk) * (1 + pvk)) / vk,
    takeoffAngleDeg: 180 - Math.asin(pvk) * DEG,
  };
}

/** Index of the layer holding a source for the direct wave: top < z ≤ bottom (layer 0 for z = 0). */
function sourceLayerFromAbove(tops: Float64Array, z: number): number {
  let k = 0;
  while (k + 1 < tops.length && (tops[k + 1] as number) < z) k++;
  return k;
}

/** Thickness of layer i crossed by a direct ray from depth z in layer k (i ≤ k), km. */
function crossed(tops: Float64Array, i: number, k: number, z: number): number {
  return (i < k ? (tops[i + 1] as number) : z) - (tops[i] as number);
}

/**
 * Ray parameter p (s/km) of the direct wave with X(p) = x: safeguarded Newton on q = p·v_max
 * (see `directWave`). p = 0 at x = 0; p = 1/v₀ for a surface source (the ray runs along the surface).
 */
function solveDirectRayParameter(v: Float64Array, tops: Float64Array, k: number, x: number, z: number): number {
  if (x === 0) return 0;
  if (z === 0) return 1 / (v[0] as number);
  let vmax = 0;
  for (let i = 0; i <= k; i++) if (crossed(tops, i, k, z) > 0 && (v[i] as number) > vmax) vmax = v[i] as number;
  let lo = 0;
  let hi = 1;
  // Start from the straight ray of a homogeneous model of the same thickness (z).
  let q = x / Math.hypot(x, z);
  const tol = 1e-12 * Math.max(1, x);
  for (let iter = 0; iter < 200; iter++) {
    let X = 0;
    let dX = 0;
    for (let i = 0; i <= k; i++) {
      const h = crossed(tops, i, k, z);
      if (h <= 0) continue;
      const a = (v[i] as number) / vmax;
      const aq = a * q;
      const c2 = (1 - aq) * (1 + aq);
      const c = Math.sqrt(c2);
      X += (h * aq) / c;
      dX += (h * a) / (c2 * c);
    }
    const f = X - x;
    if (Math.abs(f) <= tol) break;
    if (f > 0) hi = q;
    else lo = q;
    if (hi - lo <= 1e-17) break;
    let next = q - f / dX;
    if (!(next > lo && next < hi)) next = 0.5 * (lo + hi);
    q = next;
  }
  return q / vmax;
}

/** T = p·x + Σ h_i η_i of the direct wave, s (η_i = √(1/v_i² − p²), written to limit cancellation). */
function directTime(v: Float64Array, tops: Float64Array, k: number, x: number, z: number, p: number): number {
  let t = p * x;
  for (let i = 0; i <= k; i++) {
    const vi = v[i] as number;
    const pv = Math.min(1, p * vi);
    t += (crossed(tops, i, k, z) * Math.sqrt((1 - pv) * (1 + pv))) / vi;
  }
  return t;
}

/**
 * First-arrival time only (no derivatives, no objects), s: the same numbers as
 * `firstArrival(...).timeS`, for tables and grid searches where speed counts.
 */
export function firstArrivalTimeS(m: PreparedVelocityModel, wave: WaveType, distanceKm: number, depthKm: number): number {
  checkGeometry(distanceKm, depthKm);
  const v = wave === 'P' ? m.vpKmS : m.vsKmS;
  const tops = m.topsKm;
  const k = sourceLayerFromAbove(tops, depthKm);
  let best = directTime(v, tops, k, distanceKm, depthKm, solveDirectRayParameter(v, tops, k, distanceKm, depthKm));
  const head = headTimes(v, tops, distanceKm, depthKm);
  if (head < best) best = head;
  return best;
}

/** The fastest head-wave time (Infinity when none exists), s; same formulas as `headWaves`. */
function headTimes(v: Float64Array, tops: Float64Array, x: number, z: number): number {
  let best = Infinity;
  let vAbove = v[0] as number;
  for (let r = 1; r < tops.length; r++) {
    const vr = v[r] as number;
    const faster = vr > vAbove;
    if (vr > vAbove) vAbove = vr;
    if ((tops[r] as number) < z || !faster) continue;
    const p = 1 / vr;
    let t = x * p;
    let xc = 0;
    for (let i = 0; i < r; i++) {
      const topI = tops[i] as number;
      const bottomI = tops[i + 1] as number;
      const legs = bottomI - topI + Math.max(0, bottomI - Math.max(z, topI));
      const vi = v[i] as number;
      const pv = p * vi;
      const c = Math.sqrt((1 - pv) * (1 + pv));
      t += (legs * c) / vi;
      xc += (legs * pv) / c;
    }
    if (x >= xc * (1 - 1e-12) && t < best) best = t;
  }
  return best;
}

/**
 * Head waves (critically refracted along an interface) from depth z to a surface receiver at distance
 * x: one for each layer m ≥ 1 whose top is at or below the source and whose speed exceeds every speed
 * above it (otherwise no critical angle exists), with p = 1/v_m:
 *   T = x/v_m + Σ_{i<m} (H_i + D_i)·η_i,
 * H_i the full thickness of layer i (the leg up to the receiver), D_i the part of layer i between the
 * source and the interface (the leg down from the source). It exists only from the critical distance
 * x_c = Σ (H_i + D_i)·p v_i/√(1 − p² v_i²) on. For a source at the surface of a layer over a half-space
 * this is the textbook t = x/v₂ + 2h·√(1/v₁² − 1/v₂²) (e.g. Shearer 2009 ch. 4, Lay & Wallace 1995 ch. 3;
 * cited from memory, equation numbers not verified). ∂T/∂x = 1/v_m; ∂T/∂z = −η_s, s the source's layer (a
 * deeper source shortens the down-going leg).
 * @throws RangeError on a negative or non-finite distance or depth.
 */
export function headWaves(m: PreparedVelocityModel, wave: WaveType, distanceKm: number, depthKm: number): Arrival[] {
  checkGeometry(distanceKm, depthKm);
  const v = wave === 'P' ? m.vpKmS : m.vsKmS;
  const tops = m.topsKm;
  const n = tops.length;
  const x = distanceKm;
  const z = depthKm;
  const out: Arrival[] = [];
  let vAbove = v[0] as number;
  for (let r = 1; r < n; r++) {
    const top = tops[r] as number;
    const vr = v[r] as number;
    const fasterThanAbove = vr > vAbove;
    vAbove = Math.max(vAbove, vr);
    if (top < z || !fasterThanAbove) continue;
    const p = 1 / vr;
    let t = x * p;
    let xc = 0;
    let s = 0;
    for (let i = 0; i < r; i++) {
      const topI = tops[i] as number;
      const bottomI = tops[i + 1] as number;
      const full = bottomI - topI;
      const down = Math.max(0, bottomI - Math.max(z, topI));
      if (topI <= z) s = i;
      const vi = v[i] as number;
      const pv = p * vi;
      const c = Math.sqrt((1 - pv) * (1 + pv));
      t += ((full + down) * c) / vi;
      xc += ((full + down) * pv) / c;
    }
    if (x < xc * (1 - 1e-12)) continue;
    const vs = v[s] as number;
    const pvs = p * vs;
    out.push({
      phase: r === n - 1 ? `${wave}n` : `${wave}_L${r}`,
      wave,
      kind: 'head',
      refractorIndex: r,
      timeS: t,
      rayParameterSPerKm: p,
      dtdDistanceSPerKm: p,
      dtdDepthSPerKm: -Math.sqrt((1 - pvs) * (1 + pvs)) / vs,
      takeoffAngleDeg: Math.asin(pvs) * DEG,
    });
  }
  return out;
}

/** The direct wave followed by every head wave that exists at this distance and depth. */
export function allArrivals(m: PreparedVelocityModel, wave: WaveType, distanceKm: number, depthKm: number): Arrival[] {
  return [directWave(m, wave, distanceKm, depthKm), ...headWaves(m, wave, distanceKm, depthKm)];
}

/**
 * The first arrival of a wave type: the fastest of `allArrivals` (the direct wave on a tie, as it is
 * the stronger onset; common practice).
 * @throws RangeError on a negative or non-finite distance or depth.
 */
export function firstArrival(m: PreparedVelocityModel, wave: WaveType, distanceKm: number, depthKm: number): Arrival {
  let best = directWave(m, wave, distanceKm, depthKm);
  for (const a of headWaves(m, wave, distanceKm, depthKm)) if (a.timeS < best.timeS) best = a;
  return best;
}

/**
 * First-arrival travel times at the distances 0, Δx, 2Δx, … , (count − 1)·Δx for one depth, s: a table
 * for the grid search, read back with `interpolateTable` (linear; the curve is continuous, with kinks
 * only at crossover distances).
 * @throws RangeError when count < 2 or Δx ≤ 0.
 */
export function travelTimeTable(m: PreparedVelocityModel, wave: WaveType, depthKm: number, stepKm: number, count: number): Float64Array {
  if (!(stepKm > 0) || !Number.isFinite(stepKm)) throw new RangeError(`travel-time table: step must be > 0 km, got ${stepKm}`);
  if (!Number.isInteger(count) || count < 2) throw new RangeError(`travel-time table: need at least 2 distances, got ${count}`);
  const out = new Float64Array(count);
  for (let i = 0; i < count; i++) out[i] = firstArrivalTimeS(m, wave, i * stepKm, depthKm);
  return out;
}

/**
 * Linear interpolation in a `travelTimeTable` at distance x, s; beyond the last entry the last
 * segment is extended (the caller sizes the table to cover its distances).
 */
export function interpolateTable(table: Float64Array, stepKm: number, distanceKm: number): number {
  const u = distanceKm / stepKm;
  let i = Math.floor(u);
  if (i >= table.length - 1) i = table.length - 2;
  if (i < 0) i = 0;
  const a = table[i] as number;
  const b = table[i + 1] as number;
  return a + (b - a) * (u - i);
}
