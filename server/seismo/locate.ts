/**
 * Hypocentre location from P and S picks in a 1-D layered model: a grid search over latitude,
 * longitude and depth (coarse, then two finer grids around the best node), then Geiger's method
 * (iterative linearised least squares, damped in the Levenberg–Marquardt way) from the best node,
 * each pick weighted by 1/σ² with σ its uncertainty. Reports the origin with its 68 % confidence
 * ellipse and the residual of every arrival.
 *
 * Geiger (1912), "Probability method for the determination of earthquake epicenters from the arrival
 * time only" (transl. Bull. St. Louis Univ. 8, 60–71), is the linearised least-squares step; the
 * damping is Marquardt (1963), SIAM J. Appl. Math. 11(2), 431–441; the confidence regions follow the
 * linearised covariance as in Lee & Stewart, "Principles and Applications of Microearthquake Networks"
 * 1981, ch. 7 (all cited from memory). Common practice throughout.
 *
 * Conventions: times in s on the caller's time scale (e.g. seconds since the Unix epoch; internally
 * relative to the earliest pick to keep precision), distances and depths km (depth positive down from
 * the surface, stations on the surface — their elevation is not modelled), angles degrees. Each pick
 * labelled P or S is taken as the FIRST arriving P or S (the fastest of the direct and head waves),
 * so the model phase (Pg, Pn, …) is assigned by the location, not by the picker.
 */
import {
  EARTH_RADIUS_KM,
  azimuthDeg,
  azimuthalGapDeg,
  backAzimuthDeg,
  centroid,
  checkGeoPoint,
  destinationPoint,
  fromLocalKm,
  greatCircleDistanceKm,
  type GeoPoint,
} from './geodesy';
import { cholesky, choleskyInverse, choleskySolve } from './small-matrix';
import { firstArrival, firstArrivalTimeS, prepareVelocityModel, type PreparedVelocityModel } from './travel-time';
import type { VelocityModel, WaveType } from './velocity-model';

/** A station's position, degrees. */
export interface LocateStation {
  code: string;
  latitudeDeg: number;
  longitudeDeg: number;
}

/** One pick: a first P or S onset at a station. */
export interface LocatePick {
  /** The caller's id for the pick (e.g. a stream id plus phase), echoed in the arrivals. */
  id: string;
  stationCode: string;
  phase: WaveType;
  /** Onset time, s (any fixed time scale; the origin time comes back on the same scale). */
  timeS: number;
  /** One-standard-deviation uncertainty of the onset time, s; > 0. */
  uncertaintyS: number;
}

/** Options of `locateEvent`; every one has a default. */
export interface LocateOptions {
  /** Deepest depth searched, km (default 40). */
  maxDepthKm?: number;
  /** Fix the depth at this value, km (an analyst's choice; the result says so). */
  fixedDepthKm?: number;
  /** Depth at which an unresolved depth is fixed, km (default 10; our own default, a network setting). */
  defaultDepthKm?: number;
  /**
   * The depth counts as resolved when its 68 % half-width is at most this, km (default 5; our own
   * default, a network setting). Otherwise the depth is fixed at `defaultDepthKm` and the result says
   * why.
   */
  maxDepthUncertaintyKm?: number;
  /** Half-width of the first grid around the stations' centre, km (default: the farthest station + 50 km, within 50…500 km). */
  gridHalfWidthKm?: number;
  /** Most Geiger iterations (default 60). */
  maxIterations?: number;
}

/** The 68 % confidence ellipse of the epicentre. */
export interface ConfidenceEllipse {
  semiMajorKm: number;
  semiMinorKm: number;
  /** Azimuth of the semi-major axis, degrees clockwise from north in [0, 180). */
  azimuthDeg: number;
}

/** A located origin. */
export interface LocatedOrigin {
  /** Origin time on the picks' time scale, s. */
  timeS: number;
  latitudeDeg: number;
  longitudeDeg: number;
  depthKm: number;
  depthFixed: boolean;
  /** Why the depth was fixed, in words; null when it was solved for. */
  depthFixedReason: string | null;
  uncertainty: {
    /** Semi-major axis of the 68 % ellipse, km (the largest horizontal uncertainty). */
    horizontalKm68: number;
    ellipse: ConfidenceEllipse;
    /** 68 % half-width of the depth, km; null when the depth is fixed. */
    depthKm68: number | null;
    /** 68 % half-width of the origin time, s. */
    timeS68: number;
  };
  /** Root mean square of the residuals (unweighted), s. */
  rmsS: number;
  /** Largest azimuthal gap between stations seen from the epicentre, degrees. */
  azimuthalGapDeg: number;
  /** Epicentral distance of the nearest station used, km. */
  minimumDistanceKm: number;
  usedPhaseCount: number;
  usedStationCount: number;
  usedStationCodes: string[];
  /** Geiger iterations taken (the last run when the depth had to be fixed). */
  iterations: number;
  converged: boolean;
}

/** One pick as used by the location. */
export interface LocatedArrival {
  pickId: string;
  stationCode: string;
  phase: WaveType;
  /** The model branch of the first arrival (Pg, Pn, Sg, Sn, P_L1, …; see travel-time.ts). */
  modelPhase: string;
  /** Observed − computed time, s. */
  residualS: number;
  /** Epicentral distance, km. */
  distanceKm: number;
  /** Hypocentral distance √(Δ² + z²), km. */
  hypocentralDistanceKm: number;
  /** Azimuth of the station seen from the epicentre, degrees. */
  azimuthDeg: number;
  /** Azimuth of the epicentre seen from the station, degrees. */
  backAzimuthDeg: number;
  /** Take-off angle from the downward vertical, degrees. */
  takeoffAngleDeg: number;
  /** Relative weight in the inversion, (σ_min/σ)² in (0, 1]. */
  weight: number;
}

/** The outcome of `locateEvent`: a location, or a refusal with its reason in words. */
export type LocateResult =
  | { ok: true; origin: LocatedOrigin; arrivals: LocatedArrival[]; notes: string[] }
  | { ok: false; code: 'too-few-stations' | 'too-few-phases'; reason: string };

/** Least stations and phases a location needs (more than the four unknowns' worth of data). */
export const MIN_STATIONS = 3;
export const MIN_PHASES = 4;

/**
 * 68 % scale factors of the linearised normal errors: √χ²₂(0.68) = √(−2 ln 0.32) for the 2-D
 * epicentre ellipse (χ² with 2 degrees of freedom has the closed form −2 ln(1 − p)), and
 * Φ⁻¹(0.84) = 0.99446 for a one-dimensional ±half-width holding 68 % (checked against scipy.stats in
 * tests/server/seismo/locate.test.ts).
 */
export const K68_2D = Math.sqrt(-2 * Math.log(1 - 0.68));
export const K68_1D = 0.9944578832097531;

interface PickData {
  pick: LocatePick;
  station: GeoPoint;
  /** Unit vector of the station (for fast chord distances in the grid). */
  ux: number;
  uy: number;
  uz: number;
  /** Time relative to the earliest pick, s. */
  t: number;
  /** 1/σ², s⁻². */
  w: number;
}

interface Hypocentre {
  t0: number;
  latitudeDeg: number;
  longitudeDeg: number;
  depthKm: number;
}

function checkInputs(stations: readonly LocateStation[], picks: readonly LocatePick[], o: LocateOptions): Map<string, LocateStation> {
  const byCode = new Map<string, LocateStation>();
  for (const s of stations) {
    if (typeof s.code !== 'string' || s.code === '') throw new RangeError('locate: a station has no code');
    checkGeoPoint(s, `station ${s.code}`);
    if (byCode.has(s.code)) throw new RangeError(`locate: station ${s.code} is listed twice`);
    byCode.set(s.code, s);
  }
  const seen = new Set<string>();
  for (const p of picks) {
    if (!byCode.has(p.stationCode)) throw new RangeError(`locate: pick ${p.id} is at station ${p.stationCode}, which has no position`);
    if (p.phase !== 'P' && p.phase !== 'S') throw new RangeError(`locate: pick ${p.id} has phase ${String(p.phase)}; only P and S are located`);
    if (!Number.isFinite(p.timeS)) throw new RangeError(`locate: pick ${p.id} has no finite time`);
    if (!(p.uncertaintyS > 0) || !Number.isFinite(p.uncertaintyS)) throw new RangeError(`locate: pick ${p.id} needs an uncertainty > 0 s, got ${p.uncertaintyS}`);
    const key = `${p.stationCode}/${p.phase}`;
    if (seen.has(key)) throw new RangeError(`locate: two ${p.phase} picks at station ${p.stationCode}; keep one`);
    seen.add(key);
  }
  const positive = (v: number | undefined, name: string, allowZero: boolean): void => {
    if (v === undefined) return;
    if (!Number.isFinite(v) || v < 0 || (!allowZero && v === 0)) throw new RangeError(`locate: ${name} must be a finite number ${allowZero ? '≥' : '>'} 0, got ${v}`);
  };
  positive(o.maxDepthKm, 'maxDepthKm', false);
  positive(o.fixedDepthKm, 'fixedDepthKm', true);
  positive(o.defaultDepthKm, 'defaultDepthKm', true);
  positive(o.maxDepthUncertaintyKm, 'maxDepthUncertaintyKm', false);
  positive(o.gridHalfWidthKm, 'gridHalfWidthKm', false);
  if (o.maxIterations !== undefined && !(Number.isInteger(o.maxIterations) && o.maxIterations >= 1)) {
    throw new RangeError(`locate: maxIterations must be a whole number ≥ 1, got ${o.maxIterations}`);
  }
  return byCode;
}

const DEG = Math.PI / 180;

function unitVector(p: GeoPoint): [number, number, number] {
  const f = p.latitudeDeg * DEG;
  const l = p.longitudeDeg * DEG;
  return [Math.cos(f) * Math.cos(l), Math.cos(f) * Math.sin(l), Math.sin(f)];
}

interface GridBest {
  hypo: Hypocentre;
  misfit: number;
}

/** Distance step of the grid search's travel-time tables, km. */
const TABLE_STEP_KM = 1;

/**
 * Two-level grid search. Coarse: 31 × 31 nodes over ±W around the stations' centre and 9 depths over
 * [0, maxDepth]; fine: 21 × 21 nodes over ±2 coarse spacings around the coarse best node (spacing
 * ÷ 5) and 9 depths over ±4 fine depth steps (maxDepth/32) around its depth. At each node the origin
 * time is the weighted mean of (t_obs − T) and the misfit Σ w (t_obs − T − t₀)² (weighted L2, the
 * norm Geiger's step minimises too). Times come from first-arrival tables in distance (1 km step,
 * filled only where a node needs them and shared by both levels), read linearly: the interpolation
 * error (below 0.03 s) only shifts the starting point of Geiger's method, which uses exact times.
 */
function gridSearch(model: PreparedVelocityModel, data: readonly PickData[], centre: GeoPoint, halfWidthKm: number, maxDepthKm: number, fixedDepthKm: number | null): GridBest {
  const nd = data.length;
  const waveOf = Int32Array.from(data, (d) => (d.pick.phase === 'P' ? 0 : 1));
  let maxStationKm = 0;
  for (const d of data) maxStationKm = Math.max(maxStationKm, greatCircleDistanceKm(centre, d.station));
  const tableLength = Math.ceil((maxStationKm + halfWidthKm * Math.SQRT2 + 2) / TABLE_STEP_KM) + 2;
  // Depth nodes: a fine column shared by both levels (the coarse level takes every 4th).
  const depthNodes = fixedDepthKm !== null ? [fixedDepthKm] : Array.from({ length: 33 }, (_, i) => (maxDepthKm * i) / 32);
  const tables = new Map<number, Float64Array>();
  const tableFor = (depthIndex: number, wave: number): Float64Array => {
    const key = depthIndex * 2 + wave;
    let t = tables.get(key);
    if (!t) {
      t = new Float64Array(tableLength).fill(Number.NaN);
      tables.set(key, t);
    }
    return t;
  };
  const timeAt = (t: Float64Array, depthKm: number, wave: WaveType, x: number): number => {
    const u = x / TABLE_STEP_KM;
    const i = Math.min(Math.floor(u), tableLength - 2);
    let a = t[i] as number;
    if (a !== a) {
      a = firstArrivalTimeS(model, wave, i * TABLE_STEP_KM, depthKm);
      t[i] = a;
    }
    let b = t[i + 1] as number;
    if (b !== b) {
      b = firstArrivalTimeS(model, wave, (i + 1) * TABLE_STEP_KM, depthKm);
      t[i + 1] = b;
    }
    return a + (b - a) * (u - i);
  };

  // The picks' fields in typed arrays, read in the innermost loop without property look-ups.
  const pt = Float64Array.from(data, (d) => d.t);
  const pw = Float64Array.from(data, (d) => d.w);
  const pux = Float64Array.from(data, (d) => d.ux);
  const puy = Float64Array.from(data, (d) => d.uy);
  const puz = Float64Array.from(data, (d) => d.uz);
  let sw = 0;
  for (let k = 0; k < nd; k++) sw += pw[k] as number;
  const dist = new Float64Array(nd);
  let best: GridBest | null = null;
  const levels = [
    { centre, half: halfWidthKm, nodes: 31, depths: fixedDepthKm !== null ? [0] : [0, 4, 8, 12, 16, 20, 24, 28, 32] },
  ];
  for (let level = 0; level < 2; level++) {
    const lv = levels[level] as (typeof levels)[number];
    const spacing = (2 * lv.half) / (lv.nodes - 1);
    let bestMisfit = Number.POSITIVE_INFINITY;
    let bestDepthIndex = -1;
    let bestT0 = 0;
    let bestNode: GeoPoint = lv.centre;
    for (let iy = 0; iy < lv.nodes; iy++) {
      for (let ix = 0; ix < lv.nodes; ix++) {
        const node = fromLocalKm(lv.centre, { eastKm: -lv.half + ix * spacing, northKm: -lv.half + iy * spacing });
        const f = node.latitudeDeg * DEG;
        const l = node.longitudeDeg * DEG;
        const nx = Math.cos(f) * Math.cos(l);
        const ny = Math.cos(f) * Math.sin(l);
        const nz = Math.sin(f);
        for (let k = 0; k < nd; k++) {
          const ex = (pux[k] as number) - nx;
          const ey = (puy[k] as number) - ny;
          const ez = (puz[k] as number) - nz;
          dist[k] = 2 * EARTH_RADIUS_KM * Math.asin(Math.min(1, Math.sqrt(ex * ex + ey * ey + ez * ez) / 2));
        }
        for (const j of lv.depths) {
          const depthKm = depthNodes[j] as number;
          const tableP = tableFor(j, 0);
          const tableS = tableFor(j, 1);
          let swr = 0;
          let swrr = 0;
          for (let k = 0; k < nd; k++) {
            const wave = waveOf[k] as number;
            const r = (pt[k] as number) - timeAt(wave === 0 ? tableP : tableS, depthKm, wave === 0 ? 'P' : 'S', dist[k] as number);
            const w = pw[k] as number;
            swr += w * r;
            swrr += w * r * r;
          }
          const misfit = swrr - (swr * swr) / sw;
          if (bestDepthIndex < 0 || misfit < bestMisfit) {
            bestMisfit = misfit;
            bestDepthIndex = j;
            bestT0 = swr / sw;
            bestNode = node;
          }
        }
      }
    }
    const levelBest = { misfit: bestMisfit, depthIndex: bestDepthIndex, hypo: { t0: bestT0, latitudeDeg: bestNode.latitudeDeg, longitudeDeg: bestNode.longitudeDeg, depthKm: depthNodes[bestDepthIndex] as number } };
    const lb = levelBest;
    best = { misfit: lb.misfit, hypo: lb.hypo };
    const fine: number[] = [];
    if (fixedDepthKm !== null) fine.push(0);
    else for (let j = Math.max(0, lb.depthIndex - 4); j <= Math.min(32, lb.depthIndex + 4); j++) fine.push(j);
    levels.push({ centre: lb.hypo, half: 2 * spacing, nodes: 21, depths: fine });
  }
  return best as GridBest;
}

interface Evaluation {
  /** Weighted residuals r_i/σ_i. */
  wr: Float64Array;
  /** Weighted Jacobian rows (∂/∂t₀, ∂/∂east, ∂/∂north, ∂/∂z) / σ_i, nd × 4 row-major. */
  wg: Float64Array;
  chi2: number;
}

function evaluate(model: PreparedVelocityModel, data: readonly PickData[], h: Hypocentre, withJacobian: boolean): Evaluation {
  const nd = data.length;
  const wr = new Float64Array(nd);
  const wg = new Float64Array(withJacobian ? nd * 4 : 0);
  let chi2 = 0;
  for (let i = 0; i < nd; i++) {
    const d = data[i] as PickData;
    const s = Math.sqrt(d.w);
    const dist = greatCircleDistanceKm(h, d.station);
    if (withJacobian) {
      const a = firstArrival(model, d.pick.phase, dist, h.depthKm);
      const az = dist > 0 ? azimuthDeg(h, d.station) * DEG : 0;
      const r = d.t - h.t0 - a.timeS;
      wr[i] = r * s;
      // Moving the epicentre by (dE, dN) km changes the distance to a station at azimuth α by
      // −(sin α·dE + cos α·dN) (first order, exact on the sphere), so ∂T/∂E = −p sin α, ∂T/∂N = −p cos α.
      wg[i * 4] = s;
      wg[i * 4 + 1] = -a.dtdDistanceSPerKm * Math.sin(az) * s;
      wg[i * 4 + 2] = -a.dtdDistanceSPerKm * Math.cos(az) * s;
      wg[i * 4 + 3] = a.dtdDepthSPerKm * s;
    } else {
      wr[i] = (d.t - h.t0 - firstArrivalTimeS(model, d.pick.phase, dist, h.depthKm)) * s;
    }
    chi2 += (wr[i] as number) ** 2;
  }
  return { wr, wg, chi2 };
}

/** Normal matrix GᵀWG and GᵀWr for the free parameters `cols` (indices into t₀, E, N, z). */
function normalEquations(e: Evaluation, cols: readonly number[]): { n: Float64Array; g: Float64Array } {
  const m = cols.length;
  const n = new Float64Array(m * m);
  const g = new Float64Array(m);
  const nd = e.wr.length;
  for (let i = 0; i < nd; i++) {
    for (let a = 0; a < m; a++) {
      const ga = e.wg[i * 4 + (cols[a] as number)] as number;
      g[a] = (g[a] as number) + ga * (e.wr[i] as number);
      for (let b = 0; b < m; b++) n[a * m + b] = (n[a * m + b] as number) + ga * (e.wg[i * 4 + (cols[b] as number)] as number);
    }
  }
  return { n, g };
}

interface GeigerResult {
  hypo: Hypocentre;
  iterations: number;
  converged: boolean;
  /** Covariance of the free parameters (order of `cols`), null when singular. */
  covariance: Float64Array | null;
  cols: number[];
  /** Weighted misfit Σ (r/σ)² at the solution. */
  chi2: number;
}

/** A free depth this close to the surface or to the deepest depth counts as having reached it, km. */
const SURFACE_KM = 0.01;

/**
 * When the default depth fits worse than the free one by more than this in χ² = Σ (r/σ)², the free
 * depth is kept (fixed) instead: 4 is a 2σ change for one parameter (profile likelihood, common
 * practice).
 */
const MAX_CHI2_WORSENING = 4;

/** Distance by which a start on an interface or a stuck point is moved, km. */
const INTERFACE_NUDGE_KM = 1e-3;

/** True when a depth lies on one of the model's interfaces (to 1e-9 km). */
function onInterface(model: PreparedVelocityModel, depthKm: number): boolean {
  for (let i = 1; i < model.topsKm.length; i++) if (Math.abs((model.topsKm[i] as number) - depthKm) < 1e-9) return true;
  return false;
}

/** Largest horizontal and vertical step per iteration, km (keeps the linearisation honest far from the minimum). */
const MAX_STEP_KM = 20;

/**
 * Geiger's method with Marquardt damping: at each iteration solve (N + λ·diag N)·δ = GᵀWr for the
 * update δ = (δt₀, δE, δN[, δz]) with N = GᵀWG, W = diag(1/σ²); accept when the weighted misfit
 * χ² = Σ (r/σ)² does not grow (λ ÷ 10), otherwise retry with λ × 10. Steps are capped at 20 km; the
 * depth is kept in [0, maxDepth]. Converged when an accepted step moves less than 10⁻⁵ km and 10⁻⁶ s,
 * or when no damping finds a smaller misfit (a minimum to machine precision). The covariance is
 * N⁻¹ at the solution (undamped), in s² and km².
 */
function geiger(model: PreparedVelocityModel, data: readonly PickData[], start: Hypocentre, maxDepthKm: number, depthFree: boolean, maxIterations: number): GeigerResult {
  const cols = depthFree ? [0, 1, 2, 3] : [0, 1, 2];
  const m = cols.length;
  // A depth exactly on an interface sits on a kink of T(z) (∂T/∂z differs above and below), where the
  // linearised step can fail in every direction: start a hair below it instead.
  let h = depthFree && onInterface(model, start.depthKm) ? { ...start, depthKm: start.depthKm + INTERFACE_NUDGE_KM } : start;
  let nudges = 0;
  let e = evaluate(model, data, h, true);
  let lambda = 1e-3;
  let converged = false;
  let iterations = 0;
  for (; iterations < maxIterations && !converged; iterations++) {
    const { n, g } = normalEquations(e, cols);
    let accepted = false;
    for (let tries = 0; tries < 14 && !accepted; tries++) {
      const a = new Float64Array(n);
      for (let i = 0; i < m; i++) a[i * m + i] = (n[i * m + i] as number) * (1 + lambda) + 1e-30;
      const l = cholesky(a, m, 0);
      if (!l) {
        lambda *= 10;
        continue;
      }
      const step = choleskySolve(l, m, g);
      let dt = step[0] as number;
      let dE = step[1] as number;
      let dN = step[2] as number;
      let dz = depthFree ? (step[3] as number) : 0;
      const horiz = Math.hypot(dE, dN);
      const scale = Math.min(1, MAX_STEP_KM / Math.max(horiz, 1e-300), MAX_STEP_KM / Math.max(Math.abs(dz), 1e-300));
      dt *= scale;
      dE *= scale;
      dN *= scale;
      dz *= scale;
      const moved = Math.hypot(dE, dN);
      const epi = moved > 0 ? destinationPoint(h, Math.atan2(dE, dN) / DEG, moved) : h;
      const trial: Hypocentre = { t0: h.t0 + dt, latitudeDeg: epi.latitudeDeg, longitudeDeg: epi.longitudeDeg, depthKm: Math.min(maxDepthKm, Math.max(0, h.depthKm + dz)) };
      const te = evaluate(model, data, trial, true);
      if (te.chi2 <= e.chi2) {
        accepted = true;
        const tiny = moved < 1e-5 && Math.abs(trial.depthKm - h.depthKm) < 1e-5 && Math.abs(dt) < 1e-6;
        h = trial;
        e = te;
        lambda = Math.max(lambda / 10, 1e-9);
        if (tiny) converged = true;
      } else {
        lambda *= 10;
      }
    }
    if (!accepted) {
      // No damping lowers the misfit. With a tiny undamped step this is the minimum to machine
      // precision; otherwise the point sits on a kink (an interface, a crossover between branches):
      // step off it a little along the undamped step and go on, a few times at most.
      const l = cholesky(n, m, 1e-13);
      const full = l ? choleskySolve(l, m, g) : null;
      const big = full ? Math.hypot(full[1] as number, full[2] as number, depthFree ? (full[3] as number) : 0) : Infinity;
      if (full && big < 1e-3 && Math.abs(full[0] as number) < 1e-4) converged = true;
      else if (nudges < 5) {
        nudges++;
        const dz = depthFree && full ? Math.sign(full[3] as number) * INTERFACE_NUDGE_KM : 0;
        const dE = full ? Math.sign(full[1] as number) * INTERFACE_NUDGE_KM : 0;
        const dN = full ? Math.sign(full[2] as number) * INTERFACE_NUDGE_KM : 0;
        const moved = Math.hypot(dE, dN);
        const epi = moved > 0 ? destinationPoint(h, Math.atan2(dE, dN) / DEG, moved) : h;
        h = { t0: h.t0, latitudeDeg: epi.latitudeDeg, longitudeDeg: epi.longitudeDeg, depthKm: Math.min(maxDepthKm, Math.max(0, h.depthKm + dz)) };
        e = evaluate(model, data, h, true);
        lambda = 1e-3;
      } else break;
    }
  }
  const { n } = normalEquations(e, cols);
  const l = cholesky(n, m, 1e-13);
  return { hypo: h, iterations, converged, covariance: l ? choleskyInverse(l, m) : null, cols, chi2: e.chi2 };
}

/** The 68 % ellipse from the 2 × 2 (east, north) covariance block, km², see `K68_2D`. */
export function confidenceEllipse68(cEE: number, cEN: number, cNN: number): ConfidenceEllipse {
  const mean = (cEE + cNN) / 2;
  const rad = Math.hypot((cEE - cNN) / 2, cEN);
  const major = mean + rad;
  const minor = Math.max(0, mean - rad);
  // Angle of the major axis from east, counter-clockwise; azimuth is clockwise from north.
  const phi = 0.5 * Math.atan2(2 * cEN, cEE - cNN);
  let az = 90 - phi / DEG;
  az = ((az % 180) + 180) % 180;
  return { semiMajorKm: K68_2D * Math.sqrt(major), semiMinorKm: K68_2D * Math.sqrt(minor), azimuthDeg: az };
}

/**
 * Locates an event. Refuses (ok: false, with the reason in words) below 3 stations or 4 picks.
 * The depth is fixed, and the result says so and why, when the caller fixes it (`fixedDepthKm`), when
 * the free solution runs to the surface or to `maxDepthKm`, when the data cannot separate depth from
 * origin time (singular normal matrix), or when its 68 % half-width exceeds `maxDepthUncertaintyKm`;
 * then it is fixed at `defaultDepthKm` (or at 0 km for a solution that ran to the surface) and the
 * epicentre and time are solved again. The uncertainties come from the a-priori pick uncertainties
 * (not scaled by the residuals), linearised at the solution.
 * @throws RangeError on bad input: an unknown station, a duplicate P or S at a station, a time or
 *   uncertainty that is not a finite positive number, a bad coordinate, model or option.
 */
export function locateEvent(stations: readonly LocateStation[], picks: readonly LocatePick[], velocityModel: VelocityModel, options: LocateOptions = {}): LocateResult {
  const byCode = checkInputs(stations, picks, options);
  const model = prepareVelocityModel(velocityModel);
  const usedCodes = [...new Set(picks.map((p) => p.stationCode))];
  if (usedCodes.length < MIN_STATIONS) {
    return { ok: false, code: 'too-few-stations', reason: `a location needs picks from at least ${MIN_STATIONS} stations; there are ${usedCodes.length}` };
  }
  if (picks.length < MIN_PHASES) {
    return { ok: false, code: 'too-few-phases', reason: `a location needs at least ${MIN_PHASES} picks (P and S); there are ${picks.length}` };
  }
  const maxDepthKm = options.maxDepthKm ?? 40;
  const defaultDepthKm = options.defaultDepthKm ?? 10;
  const maxDepthUncertaintyKm = options.maxDepthUncertaintyKm ?? 5;
  const maxIterations = options.maxIterations ?? 60;
  const tRef = Math.min(...picks.map((p) => p.timeS));
  const data: PickData[] = picks.map((p) => {
    const s = byCode.get(p.stationCode) as LocateStation;
    const station = { latitudeDeg: s.latitudeDeg, longitudeDeg: s.longitudeDeg };
    const [ux, uy, uz] = unitVector(station);
    return { pick: p, station, ux, uy, uz, t: p.timeS - tRef, w: 1 / p.uncertaintyS ** 2 };
  });
  const stationPoints = usedCodes.map((c) => byCode.get(c) as LocateStation);
  const centre = centroid(stationPoints);
  const spread = Math.max(...stationPoints.map((s) => greatCircleDistanceKm(centre, s)));
  const halfWidthKm = options.gridHalfWidthKm ?? Math.min(500, Math.max(50, spread + 50));
  const notes: string[] = [];

  const fixedByCaller = options.fixedDepthKm;
  const grid = gridSearch(model, data, centre, halfWidthKm, Math.max(maxDepthKm, fixedByCaller ?? 0), fixedByCaller ?? null);
  let run: GeigerResult;
  let depthFixedReason: string | null = null;
  if (fixedByCaller !== undefined) {
    run = geiger(model, data, { ...grid.hypo, depthKm: fixedByCaller }, Math.max(maxDepthKm, fixedByCaller), false, maxIterations);
    depthFixedReason = `depth fixed at ${fixedByCaller} km by the caller`;
  } else {
    const free = geiger(model, data, grid.hypo, maxDepthKm, true, maxIterations);
    const zIndex = free.cols.indexOf(3);
    const sigmaZ = free.covariance ? Math.sqrt(free.covariance[zIndex * free.cols.length + zIndex] as number) : Number.POSITIVE_INFINITY;
    let fixAt: number | null = null;
    let why = '';
    if (!free.converged) {
      fixAt = defaultDepthKm;
      why = `the free-depth solution did not converge in ${maxIterations} iterations`;
    } else if (free.hypo.depthKm <= SURFACE_KM) {
      fixAt = 0;
      depthFixedReason = 'the free-depth solution went to the surface; depth fixed at 0 km (a very shallow source such as a blast, or a depth the picks do not constrain)';
    } else if (free.hypo.depthKm >= maxDepthKm - SURFACE_KM) {
      fixAt = defaultDepthKm;
      why = `the free-depth solution ran to the deepest depth searched (${maxDepthKm} km)`;
    } else if (!free.covariance) {
      fixAt = defaultDepthKm;
      why = 'the picks cannot separate depth from origin time';
    } else if (K68_1D * sigmaZ > maxDepthUncertaintyKm) {
      fixAt = defaultDepthKm;
      why = `depth not resolved (68 % uncertainty ${(K68_1D * sigmaZ).toFixed(1)} km > ${maxDepthUncertaintyKm} km)`;
    }
    if (fixAt === null) run = free;
    else {
      run = geiger(model, data, { ...(free.converged ? free.hypo : grid.hypo), depthKm: fixAt }, Math.max(maxDepthKm, fixAt), false, maxIterations);
      if (fixAt !== 0) depthFixedReason = `${why}; depth fixed at the default ${defaultDepthKm} km`;
      // The default may fit far worse than the free depth (e.g. a shallow source, where the linearised
      // depth uncertainty blows up because ∂T/∂z → 0 at the surface): then keep the free depth, fixed.
      const worse = run.chi2 - free.chi2;
      if (fixAt !== 0 && free.converged && worse > MAX_CHI2_WORSENING) {
        const atFree = geiger(model, data, free.hypo, maxDepthKm, false, maxIterations);
        if (atFree.converged) {
          run = atFree;
          depthFixedReason = `${why}; depth fixed at the free solution's ${free.hypo.depthKm.toFixed(2)} km, which fits the picks much better than the default ${defaultDepthKm} km (weighted misfit lower by ${worse.toFixed(1)})`;
        }
      }
    }
  }
  const depthFixed = depthFixedReason !== null;
  if (depthFixedReason) notes.push(depthFixedReason);

  const h = run.hypo;
  const final = evaluate(model, data, h, true);
  const minSigma = Math.min(...picks.map((p) => p.uncertaintyS));
  const arrivals: LocatedArrival[] = data.map((d, i) => {
    const distanceKm = greatCircleDistanceKm(h, d.station);
    const a = firstArrival(model, d.pick.phase, distanceKm, h.depthKm);
    return {
      pickId: d.pick.id,
      stationCode: d.pick.stationCode,
      phase: d.pick.phase,
      modelPhase: a.phase,
      residualS: (final.wr[i] as number) * d.pick.uncertaintyS,
      distanceKm,
      hypocentralDistanceKm: Math.hypot(distanceKm, h.depthKm),
      azimuthDeg: azimuthDeg(h, d.station),
      backAzimuthDeg: backAzimuthDeg(h, d.station),
      takeoffAngleDeg: a.takeoffAngleDeg,
      weight: (minSigma / d.pick.uncertaintyS) ** 2,
    };
  });
  const rmsS = Math.sqrt(arrivals.reduce((s, a) => s + a.residualS ** 2, 0) / arrivals.length);
  const stationAz = usedCodes.map((c) => azimuthDeg(h, byCode.get(c) as LocateStation));
  const gap = azimuthalGapDeg(stationAz);
  const minimumDistanceKm = Math.min(...usedCodes.map((c) => greatCircleDistanceKm(h, byCode.get(c) as LocateStation)));

  const m = run.cols.length;
  const cov = run.covariance;
  const c = (i: number, j: number): number => (cov ? (cov[i * m + j] as number) : Number.POSITIVE_INFINITY);
  const ellipse = cov ? confidenceEllipse68(c(1, 1), c(1, 2), c(2, 2)) : { semiMajorKm: Number.POSITIVE_INFINITY, semiMinorKm: Number.POSITIVE_INFINITY, azimuthDeg: 0 };
  if (!cov) notes.push('the epicentre is not constrained by these picks (singular normal equations): no uncertainty can be given');
  if (!run.converged) notes.push(`the least-squares iterations did not converge in ${maxIterations} iterations: treat this location with extra care`);
  if (gap > 180) notes.push(`azimuthal gap ${gap.toFixed(0)}° > 180°: the epicentre is weakly constrained across the gap`);
  if (!depthFixed && minimumDistanceKm > 2 * Math.max(h.depthKm, 1)) {
    notes.push(`the nearest station is ${minimumDistanceKm.toFixed(1)} km away, more than twice the depth: the depth is weakly constrained (common practice: a station within about one to two focal depths pins it)`);
  }
  if (velocityModel.isDefault) notes.push(`located with the default velocity model "${velocityModel.name}"; replace it with the network's own model`);
  notes.push('uncertainties are 68 % linearised confidence limits from the pick uncertainties; the velocity model adds error that they do not include');

  const origin: LocatedOrigin = {
    timeS: tRef + h.t0,
    latitudeDeg: h.latitudeDeg,
    longitudeDeg: h.longitudeDeg,
    depthKm: h.depthKm,
    depthFixed,
    depthFixedReason,
    uncertainty: {
      horizontalKm68: ellipse.semiMajorKm,
      ellipse,
      depthKm68: depthFixed || !cov ? null : K68_1D * Math.sqrt(c(3, 3)),
      timeS68: K68_1D * Math.sqrt(c(0, 0)),
    },
    rmsS,
    azimuthalGapDeg: gap,
    minimumDistanceKm,
    usedPhaseCount: picks.length,
    usedStationCount: usedCodes.length,
    usedStationCodes: usedCodes,
    iterations: run.iterations,
    converged: run.converged,
  };
  return { ok: true, origin, arrivals, notes };
}
