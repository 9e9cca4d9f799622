/**
 * The 1-D layered velocity model a network locates with: flat layers of constant P and S speed, depth
 * positive down from the surface (0 km), the last layer a half-space. Stations sit on the surface
 * (their elevation is not modelled).
 */

/** One layer: its top depth and its P and S speeds. */
export interface VelocityLayer {
  /** Depth of the layer's top below the surface, km (the first layer's is 0). */
  topKm: number;
  /** P-wave speed, km/s. */
  vpKmS: number;
  /** S-wave speed, km/s. */
  vsKmS: number;
}

/** A named layered model; the layers go down from the surface and the last one extends without end. */
export interface VelocityModel {
  name: string;
  layers: readonly VelocityLayer[];
  /** True for Seisift's own placeholder, which every network should replace with its own model. */
  isDefault?: boolean;
}

/** The wave type a travel time is for. */
export type WaveType = 'P' | 'S';

/**
 * Seisift's default crust: a generic three-layer continental crust over a mantle half-space, chosen by
 * us as a plausible starting point (speeds typical of continental crust; Vp/Vs ≈ 1.73, common
 * practice). It is NOT any network's model and is labelled as a default to be replaced: locations
 * made with it carry a note saying so.
 */
export const DEFAULT_VELOCITY_MODEL: VelocityModel = Object.freeze({
  name: 'Seisift default crust (placeholder: replace with the network model)',
  isDefault: true,
  layers: Object.freeze([
    Object.freeze({ topKm: 0, vpKmS: 5.6, vsKmS: 3.24 }),
    Object.freeze({ topKm: 5, vpKmS: 6.1, vsKmS: 3.53 }),
    Object.freeze({ topKm: 18, vpKmS: 6.6, vsKmS: 3.81 }),
    Object.freeze({ topKm: 33, vpKmS: 8.0, vsKmS: 4.62 }),
  ]),
});

/** Limits of the validation: beyond them a value is surely a unit or typing error. */
const MAX_SPEED_KM_S = 20;
const MAX_TOP_KM = 1000;

/**
 * Checks a model and returns it unchanged.
 * Rules: a non-empty name; at least one layer; the first top at 0 km; tops strictly increasing and
 * at most 1000 km; 0 < Vs < Vp ≤ 20 km/s in every layer (a shear speed at or above the P speed
 * is not a solid; 20 km/s catches m/s typed as km/s).
 * @throws RangeError naming the layer (numbered from 1 at the surface) and the problem.
 */
export function validateVelocityModel(model: VelocityModel): VelocityModel {
  if (typeof model.name !== 'string' || model.name.trim() === '') throw new RangeError('velocity model: the name is empty');
  // Array.isArray narrows a readonly array to any[]; check on the model, then keep the declared type.
  if (!Array.isArray(model.layers)) throw new RangeError('velocity model: there are no layers');
  const layers: readonly VelocityLayer[] = model.layers;
  if (layers.length === 0) throw new RangeError('velocity model: there are no layers');
  layers.forEach((l, i) => {
    const at = `velocity model layer ${i + 1}`;
    for (const [k, v] of [['topKm', l.topKm], ['vpKmS', l.vpKmS], ['vsKmS', l.vsKmS]] as const) {
      if (typeof v !== 'number' || !Number.isFinite(v)) throw new RangeError(`${at}: ${k} must be a finite number, got ${String(v)}`);
    }
    if (i === 0 && l.topKm !== 0) throw new RangeError(`${at}: the first layer must start at 0 km, got ${l.topKm} km`);
    if (i > 0 && !(l.topKm > (layers[i - 1] as VelocityLayer).topKm)) {
      throw new RangeError(`${at}: top ${l.topKm} km is not below the previous layer's top ${(layers[i - 1] as VelocityLayer).topKm} km`);
    }
    if (l.topKm > MAX_TOP_KM) throw new RangeError(`${at}: top ${l.topKm} km is deeper than ${MAX_TOP_KM} km`);
    if (!(l.vpKmS > 0) || l.vpKmS > MAX_SPEED_KM_S) throw new RangeError(`${at}: Vp must be in (0, ${MAX_SPEED_KM_S}] km/s, got ${l.vpKmS}`);
    if (!(l.vsKmS > 0)) throw new RangeError(`${at}: Vs must be > 0 km/s, got ${l.vsKmS}`);
    if (!(l.vsKmS < l.vpKmS)) throw new RangeError(`${at}: Vs ${l.vsKmS} km/s must be below Vp ${l.vpKmS} km/s`);
  });
  return model;
}
