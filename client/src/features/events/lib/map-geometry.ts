import type { Feature, Polygon } from 'geojson';

/** Mean Earth radius, km (IUGG; the same as server/seismo/geodesy.ts). */
const EARTH_RADIUS_KM = 6371;

/**
 * The 68 % confidence ellipse around an epicentre as a closed lon/lat ring, for drawing on a map.
 * Points on the ellipse x(θ) = a cos θ, y(θ) = b sin θ (km, major axis along `azimuthDeg`
 * clockwise from north) are placed at their great-circle distance and azimuth from the centre
 * (direct geodesic problem on a sphere; e.g. Snyder 1987, USGS PP 1395, eq. 5-5 and 5-6).
 * Rings wind clockwise as seen on the map, which d3-geo takes as the small polygon inside.
 * @param lat, lon centre, degrees; semiMajorKm, semiMinorKm ≥ 0; azimuthDeg of the major axis.
 */
export function ellipseRing(lat: number, lon: number, semiMajorKm: number, semiMinorKm: number, azimuthDeg: number, points = 72): [number, number][] {
  const ring: [number, number][] = [];
  const phi1 = (lat * Math.PI) / 180;
  const lambda1 = (lon * Math.PI) / 180;
  const rot = (azimuthDeg * Math.PI) / 180;
  for (let k = 0; k <= points; k++) {
    // Walk clockwise on the map (increasing azimuth).
    const theta = (2 * Math.PI * k) / points;
    const along = semiMajorKm * Math.cos(theta);
    const across = semiMinorKm * Math.sin(theta);
    const d = Math.hypot(along, across);
    const az = rot + Math.atan2(across, along);
    const delta = d / EARTH_RADIUS_KM;
    const phi2 = Math.asin(Math.sin(phi1) * Math.cos(delta) + Math.cos(phi1) * Math.sin(delta) * Math.cos(az));
    const lambda2 = lambda1 + Math.atan2(Math.sin(az) * Math.sin(delta) * Math.cos(phi1), Math.cos(delta) - Math.sin(phi1) * Math.sin(phi2));
    ring.push([(lambda2 * 180) / Math.PI, (phi2 * 180) / Math.PI]);
  }
  return ring;
}

/** The ellipse as a GeoJSON polygon feature (see `ellipseRing`). */
export function ellipseFeature(lat: number, lon: number, semiMajorKm: number, semiMinorKm: number, azimuthDeg: number): Feature<Polygon> {
  return { type: 'Feature', properties: {}, geometry: { type: 'Polygon', coordinates: [ellipseRing(lat, lon, semiMajorKm, semiMinorKm, azimuthDeg)] } };
}

/** A "nice" scale-bar length, km: 1, 2 or 5 × 10ⁿ, the largest not above `maxKm`. */
export function niceScaleKm(maxKm: number): number {
  if (!(maxKm > 0)) return 1;
  const p = 10 ** Math.floor(Math.log10(maxKm));
  for (const m of [5, 2, 1]) if (m * p <= maxKm) return m * p;
  return p;
}
