/**
 * Positions on the Earth for location: great-circle distance, azimuth and back-azimuth, the point at a
 * given distance and azimuth, and a local azimuthal-equidistant plane around a centre.
 *
 * The Earth is a SPHERE of radius R = 6371 km (the mean radius; common practice for local and
 * regional location). On networks up to a few hundred km the difference from the ellipsoid is a few
 * tenths of a per cent of a distance, well below what a 1-D velocity model resolves.
 * Angles are degrees (latitude north positive, longitude east positive), distances km.
 */

/** Mean Earth radius used everywhere in Seisift's location, km. */
export const EARTH_RADIUS_KM = 6371;

const DEG = Math.PI / 180;

/** A point on the surface: latitude in [−90, 90]° and a finite longitude, degrees. */
export interface GeoPoint {
  latitudeDeg: number;
  longitudeDeg: number;
}

/** A point of the local plane: km east and km north of the plane's centre. */
export interface LocalPoint {
  eastKm: number;
  northKm: number;
}

/**
 * Checks a point's coordinates.
 * @throws RangeError naming the bad value (latitude outside [−90, 90]°, a longitude that is not finite).
 */
export function checkGeoPoint(p: GeoPoint, what = 'point'): void {
  if (!Number.isFinite(p.latitudeDeg) || p.latitudeDeg < -90 || p.latitudeDeg > 90) {
    throw new RangeError(`${what}: latitude must be between -90 and 90 degrees, got ${p.latitudeDeg}`);
  }
  if (!Number.isFinite(p.longitudeDeg)) throw new RangeError(`${what}: longitude must be a finite number of degrees, got ${p.longitudeDeg}`);
}

/**
 * Central angle between two points, radians, in the atan2 form that is well conditioned at every
 * distance (small, large and antipodal):
 * σ = atan2(√((cos φ₂ sin Δλ)² + (cos φ₁ sin φ₂ − sin φ₁ cos φ₂ cos Δλ)²), sin φ₁ sin φ₂ + cos φ₁ cos φ₂ cos Δλ).
 * Source: the spherical case of Vincenty (1975), Survey Review 23(176), eq. 14 (from memory); the same
 * angle as the haversine formula (Snyder 1987, USGS Prof. Paper 1395, eq. 5-3a, from memory).
 */
export function centralAngleRad(a: GeoPoint, b: GeoPoint): number {
  const p1 = a.latitudeDeg * DEG;
  const p2 = b.latitudeDeg * DEG;
  const dl = (b.longitudeDeg - a.longitudeDeg) * DEG;
  const c1 = Math.cos(p1);
  const c2 = Math.cos(p2);
  const s1 = Math.sin(p1);
  const s2 = Math.sin(p2);
  const cdl = Math.cos(dl);
  const y = Math.hypot(c2 * Math.sin(dl), c1 * s2 - s1 * c2 * cdl);
  const x = s1 * s2 + c1 * c2 * cdl;
  return Math.atan2(y, x);
}

/**
 * Great-circle (epicentral) distance between two surface points on the sphere R = 6371 km:
 * Δ = R·σ with σ from `centralAngleRad`. Units: degrees in, km out.
 * @throws RangeError on a bad coordinate.
 */
export function greatCircleDistanceKm(a: GeoPoint, b: GeoPoint): number {
  checkGeoPoint(a, 'from');
  checkGeoPoint(b, 'to');
  return EARTH_RADIUS_KM * centralAngleRad(a, b);
}

/**
 * Azimuth of `to` as seen from `from` (the initial bearing of the great circle), degrees clockwise from
 * north in [0, 360): tan α = cos φ₂ sin Δλ / (cos φ₁ sin φ₂ − sin φ₁ cos φ₂ cos Δλ).
 * Source: Snyder (1987), USGS Prof. Paper 1395, eq. 5-4b (from memory); spherical trigonometry.
 * Coincident points give 0; from a pole the azimuth is the longitude convention's and meaningless.
 * @throws RangeError on a bad coordinate.
 */
export function azimuthDeg(from: GeoPoint, to: GeoPoint): number {
  checkGeoPoint(from, 'from');
  checkGeoPoint(to, 'to');
  const p1 = from.latitudeDeg * DEG;
  const p2 = to.latitudeDeg * DEG;
  const dl = (to.longitudeDeg - from.longitudeDeg) * DEG;
  const y = Math.sin(dl) * Math.cos(p2);
  const x = Math.cos(p1) * Math.sin(p2) - Math.sin(p1) * Math.cos(p2) * Math.cos(dl);
  if (y === 0 && x === 0) return 0;
  return normalizeAzimuthDeg(Math.atan2(y, x) / DEG);
}

/**
 * Back-azimuth: the azimuth of the event as seen from the station, degrees clockwise from north in
 * [0, 360) (the direction a station looks to see the source; common practice). On a sphere it is not
 * the forward azimuth ± 180° except along a meridian or the equator.
 */
export function backAzimuthDeg(event: GeoPoint, station: GeoPoint): number {
  return azimuthDeg(station, event);
}

/** Wraps an angle into [0, 360) degrees. */
export function normalizeAzimuthDeg(deg: number): number {
  const a = deg % 360;
  const w = a < 0 ? a + 360 : a;
  // −1e-17 % 360 + 360 rounds to exactly 360.
  return w >= 360 ? 0 : w;
}

/**
 * The point reached from `from` along the great circle leaving at azimuth α after distance d (direct
 * geodesic problem on the sphere):
 * φ₂ = asin(sin φ₁ cos δ + cos φ₁ sin δ cos α), λ₂ = λ₁ + atan2(sin α sin δ cos φ₁, cos δ − sin φ₁ sin φ₂),
 * δ = d/R. Source: spherical trigonometry (Snyder 1987, eqs. 5-5 and 5-6, from memory).
 * Units: degrees, km; the longitude is returned in (−180, 180].
 * @throws RangeError on a bad coordinate or a distance that is not finite.
 */
export function destinationPoint(from: GeoPoint, azimuthDegrees: number, distanceKm: number): GeoPoint {
  checkGeoPoint(from, 'from');
  if (!Number.isFinite(azimuthDegrees)) throw new RangeError(`azimuth must be a finite number of degrees, got ${azimuthDegrees}`);
  if (!Number.isFinite(distanceKm)) throw new RangeError(`distance must be a finite number of km, got ${distanceKm}`);
  const p1 = from.latitudeDeg * DEG;
  const a = azimuthDegrees * DEG;
  const d = distanceKm / EARTH_RADIUS_KM;
  const sp2 = Math.sin(p1) * Math.cos(d) + Math.cos(p1) * Math.sin(d) * Math.cos(a);
  const p2 = Math.asin(Math.max(-1, Math.min(1, sp2)));
  const dl = Math.atan2(Math.sin(a) * Math.sin(d) * Math.cos(p1), Math.cos(d) - Math.sin(p1) * sp2);
  return { latitudeDeg: p2 / DEG, longitudeDeg: wrapLongitudeDeg(from.longitudeDeg + dl / DEG) };
}

/** Wraps a longitude into (−180, 180] degrees. */
export function wrapLongitudeDeg(deg: number): number {
  let l = ((deg + 180) % 360 + 360) % 360 - 180;
  if (l === -180) l = 180;
  return l;
}

/**
 * Local azimuthal-equidistant plane around `centre`: the point's great-circle distance Δ and azimuth α
 * from the centre become (east, north) = (Δ sin α, Δ cos α) km. Distances and azimuths FROM the centre
 * are exact; between two other points the plane's distance differs from the great circle by a relative
 * amount of order (Δ/R)², about 10⁻³ at 200 km (Snyder 1987, ch. 25, from memory). `fromLocalKm`
 * inverts it exactly (up to rounding).
 */
export function toLocalKm(centre: GeoPoint, p: GeoPoint): LocalPoint {
  const d = greatCircleDistanceKm(centre, p);
  if (d === 0) return { eastKm: 0, northKm: 0 };
  const a = azimuthDeg(centre, p) * DEG;
  return { eastKm: d * Math.sin(a), northKm: d * Math.cos(a) };
}

/** Inverse of `toLocalKm`: the surface point at (east, north) km of the centre's plane. */
export function fromLocalKm(centre: GeoPoint, q: LocalPoint): GeoPoint {
  const d = Math.hypot(q.eastKm, q.northKm);
  if (d === 0) return { latitudeDeg: centre.latitudeDeg, longitudeDeg: centre.longitudeDeg };
  return destinationPoint(centre, Math.atan2(q.eastKm, q.northKm) / DEG, d);
}

/**
 * Geographic centre of a set of points: the normalised mean of their unit vectors (common practice;
 * it does not jump at the antimeridian as a mean of longitudes does).
 * @throws RangeError when the list is empty or the points cancel out (e.g. two antipodes).
 */
export function centroid(points: readonly GeoPoint[]): GeoPoint {
  if (points.length === 0) throw new RangeError('centroid: no points');
  let x = 0;
  let y = 0;
  let z = 0;
  for (const p of points) {
    checkGeoPoint(p);
    const f = p.latitudeDeg * DEG;
    const l = p.longitudeDeg * DEG;
    x += Math.cos(f) * Math.cos(l);
    y += Math.cos(f) * Math.sin(l);
    z += Math.sin(f);
  }
  const h = Math.hypot(x, y);
  if (Math.hypot(h, z) < 1e-12 * points.length) throw new RangeError('centroid: the points cancel out (no defined centre)');
  return { latitudeDeg: Math.atan2(z, h) / DEG, longitudeDeg: h === 0 ? 0 : Math.atan2(y, x) / DEG };
}

/**
 * Largest azimuthal gap: the widest angle between consecutive azimuths from the epicentre to the
 * stations (around the full circle, so the wrap from the last back to the first counts), degrees.
 * One station (or several on one azimuth) gives 360; none gives 360. Common practice as a location
 * quality figure (the larger the gap, the weaker the constraint across it).
 * @param azimuthsDeg azimuths from the epicentre to each station, degrees (any range; wrapped)
 */
export function azimuthalGapDeg(azimuthsDeg: readonly number[]): number {
  if (azimuthsDeg.length === 0) return 360;
  const a = azimuthsDeg.map((v) => {
    if (!Number.isFinite(v)) throw new RangeError(`azimuthal gap: azimuth must be finite, got ${v}`);
    return normalizeAzimuthDeg(v);
  });
  a.sort((p, q) => p - q);
  let gap = 360 - ((a[a.length - 1] as number) - (a[0] as number));
  for (let i = 1; i < a.length; i++) gap = Math.max(gap, (a[i] as number) - (a[i - 1] as number));
  return gap;
}
