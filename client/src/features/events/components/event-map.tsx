import { memo, useEffect, useMemo, useState } from 'react';
import { geoDistance, geoGraticule, geoMercator, geoPath, type GeoPermissibleObjects, type GeoProjection } from 'd3-geo';
import { feature, mesh } from 'topojson-client';
import type { Feature, FeatureCollection, Geometry, MultiLineString, MultiPolygon, Position } from 'geojson';
import type { GeometryCollection, Topology } from 'topojson-specification';
import type { EventGeometry } from '@shared/schemas/event-geometry';
import type { EventDetail } from '@shared/schemas/events';
import { Button } from '@client/components/ui/button';
import { ellipseFeature, niceScaleKm } from '@client/features/events/lib/map-geometry';
import { whenIdle } from '@client/lib/when-idle';

/** A piece of outline with its box, [[west, south], [east, north]] in degrees (`boxOf`). */
type Piece<T> = { coords: T; bounds: [[number, number], [number, number]] };
/** Land polygons and border lines, each with its bounds, so a view projects only what it shows. */
type Outlines = { land: Piece<Position[][]>[]; borders: Piece<Position[]>[] };

const polygonsOf = (g: Feature<Geometry> | FeatureCollection): Position[][][] => {
  const geoms = g.type === 'FeatureCollection' ? g.features.map((f) => f.geometry) : [g.geometry];
  return geoms.flatMap((x) => (x.type === 'Polygon' ? [x.coordinates] : x.type === 'MultiPolygon' ? x.coordinates : []));
};

/** Longitude/latitude box of a ring or line, [[west, south], [east, north]] (a piece wider than 180° of longitude crosses the antimeridian: marked west > east). */
function boxOf(points: readonly Position[]): [[number, number], [number, number]] {
  let w = Infinity;
  let s = Infinity;
  let e = -Infinity;
  let n = -Infinity;
  for (const [x = 0, y = 0] of points) {
    if (x < w) w = x;
    if (x > e) e = x;
    if (y < s) s = y;
    if (y > n) n = y;
  }
  return e - w > 180 ? [[180, s], [-180, n]] : [[w, s], [e, n]];
}

let outlinesOnce: Promise<Outlines> | null = null;
/**
 * Natural Earth 1:50m outlines from the world-atlas package, loaded on first use as a separate
 * chunk of the build (the map needs no online service), split into pieces with their boxes once
 * per page: the whole world at 1:50m is ~100 000 points, which must not be projected again on
 * every relocation.
 */
function loadOutlines(): Promise<Outlines> {
  outlinesOnce ??= import('world-atlas/countries-50m.json').then((mod) => {
    const topo = mod.default as unknown as Topology<{ countries: GeometryCollection; land: GeometryCollection }>;
    const land = polygonsOf(feature(topo, topo.objects.land)).map((coords) => ({ coords, bounds: boxOf(coords[0] ?? []) }));
    const borders = mesh(topo, topo.objects.countries, (a, b) => a !== b).coordinates.map((coords) => ({ coords, bounds: boxOf(coords) }));
    return { land, borders };
  });
  return outlinesOnce;
}

/** Whether a piece's bounds meet the box [[w, s], [e, n]] (pieces across the antimeridian always do). */
function meets<T>(p: Piece<T>, [[w, s], [e, n]]: [[number, number], [number, number]]): boolean {
  const [[pw, ps], [pe, pn]] = p.bounds;
  if (pw > pe) return true;
  return pe >= w && pw <= e && pn >= s && ps <= n;
}

/** The longitude/latitude box the map shows, [[west, south], [east, north]] (Mercator: the corners'). */
function viewBox(projection: GeoProjection): [[number, number], [number, number]] {
  const a = projection.invert?.([0, H]);
  const b = projection.invert?.([W, 0]);
  return a && b ? [[a[0], a[1]], [b[0], b[1]]] : [[-180, -85], [180, 85]];
}

/** The SVG paths of the outlines inside the projection's view (a 1° margin), clipped to the map. */
function outlinePaths(outlines: Outlines, projection: GeoProjection): { land: string; borders: string } {
  const [[w, s], [e, n]] = viewBox(projection);
  const box: [[number, number], [number, number]] = [[w - 1, s - 1], [e + 1, n + 1]];
  const path = geoPath(projection);
  const land: MultiPolygon = { type: 'MultiPolygon', coordinates: outlines.land.filter((p) => meets(p, box)).map((p) => p.coords) };
  const borders: MultiLineString = { type: 'MultiLineString', coordinates: outlines.borders.filter((p) => meets(p, box)).map((p) => p.coords) };
  return { land: path(land) ?? '', borders: path(borders) ?? '' };
}

const W = 360;
const H = 300;

/** Props of <EventMap>. */
export type EventMapProps = { geometry: EventGeometry; origin: EventDetail['origin'] };

/**
 * The event on a map drawn offline: land and borders (Natural Earth via world-atlas, public domain),
 * a graticule, every station of the network (triangles; the event's stations filled and labelled,
 * the others hollow), the epicentre (a cross in a circle) and its 68 % confidence ellipse, a km
 * scale bar. Mercator fitted to the network and the ellipse; "Region" zooms out to ±300 km.
 */
export const EventMap = memo(function EventMap({ geometry, origin }: EventMapProps) {
  const [outlines, setOutlines] = useState<Outlines | null>(null);
  const [failed, setFailed] = useState<string | null>(null);
  const [view, setView] = useState<'network' | 'region'>('network');
  useEffect(() => {
    let live = true;
    // The outlines (a large chunk to evaluate) wait for the traces' first paint, then for idleness.
    const cancel = whenIdle(
      () => {
        loadOutlines().then(
          (o) => live && setOutlines(o),
          (e: unknown) => live && setFailed(e instanceof Error ? e.message : String(e)),
        );
      },
      { timeoutMs: 3000, afterMs: 400 },
    );
    return () => {
      live = false;
      cancel();
    };
  }, []);

  const ellipse = useMemo(
    () => (origin ? ellipseFeature(origin.latitude, origin.longitude, origin.uncertainty.ellipse.semiMajorKm, origin.uncertainty.ellipse.semiMinorKm, origin.uncertainty.ellipse.azimuthDeg) : null),
    [origin],
  );
  const projection = useMemo(() => {
    const pts: [number, number][] = geometry.stations.map((s) => [s.longitude, s.latitude]);
    if (origin) pts.push([origin.longitude, origin.latitude]);
    let fitTo: GeoPermissibleObjects = { type: 'FeatureCollection', features: [{ type: 'Feature', properties: {}, geometry: { type: 'MultiPoint', coordinates: pts } }, ...(ellipse ? [ellipse] : [])] };
    if (view === 'region') {
      // About ±300 km (2.7° of latitude) around the middle of the network.
      const lat = pts.reduce((t, q) => t + q[1], 0) / Math.max(1, pts.length);
      const lon = pts.reduce((t, q) => t + q[0], 0) / Math.max(1, pts.length);
      const dLon = 2.7 / Math.max(0.1, Math.cos((lat * Math.PI) / 180));
      fitTo = { type: 'MultiPoint', coordinates: [[lon - dLon, lat - 2.7], [lon + dLon, lat + 2.7]] };
    }
    return geoMercator().fitExtent([[28, 24], [W - 28, H - 34]], fitTo).clipExtent([[0, 0], [W, H]]);
  }, [geometry.stations, origin, ellipse, view]);
  const path = geoPath(projection);
  const drawnOutlines = useMemo(() => (outlines ? outlinePaths(outlines, projection) : null), [outlines, projection]);
  // The graticule over the view only: a 0.1° graticule of the whole globe is ~5 000 lines, far too
  // many to project on every relocation.
  const graticulePath = useMemo(() => {
    const box = viewBox(projection);
    const step = view === 'region' ? 1 : 0.1;
    const snap = (v: number, up: boolean) => (up ? Math.ceil(v / step) : Math.floor(v / step)) * step;
    const g = geoGraticule()
      .extent([[snap(box[0][0], false), snap(Math.max(-89.9, box[0][1]), false)], [snap(box[1][0], true), snap(Math.min(89.9, box[1][1]), true)]])
      .step([step, step])();
    return geoPath(projection)(g) ?? '';
  }, [projection, view]);
  // Scale bar: km per px along the map's middle row.
  const a = projection.invert?.([W / 2 - 50, H / 2]);
  const b = projection.invert?.([W / 2 + 50, H / 2]);
  const kmPer100Px = a && b ? geoDistance(a, b) * 6371 : 0;
  const barKm = niceScaleKm(kmPer100Px * 1.2);
  const barPx = kmPer100Px > 0 ? (barKm / kmPer100Px) * 100 : 0;
  const epi = origin ? projection([origin.longitude, origin.latitude]) : null;
  const members = geometry.stations.filter((s) => s.member).length;
  return (
    <figure className="rounded-sm border border-line bg-surface p-2" aria-label="Map of the event">
      <div className="mb-1 flex items-center justify-between gap-2">
        <figcaption className="text-sm font-medium">Map</figcaption>
        <div className="flex gap-1">
          <Button size="sm" variant={view === 'network' ? 'primary' : 'secondary'} onClick={() => setView('network')} aria-pressed={view === 'network'}>
            Network
          </Button>
          <Button size="sm" variant={view === 'region' ? 'primary' : 'secondary'} onClick={() => setView('region')} aria-pressed={view === 'region'}>
            Region
          </Button>
        </div>
      </div>
      <svg
        viewBox={`0 0 ${W} ${H}`}
        className="block h-auto w-full bg-sunken"
        role="img"
        aria-label={`${geometry.stations.length} stations of network ${geometry.network}, ${members} of them recorded this event${origin ? `; epicentre ${origin.latitude.toFixed(3)}°, ${origin.longitude.toFixed(3)}° with its 68 % ellipse` : '; not located'}`}
        data-testid="event-map"
        data-outlines={outlines ? 'drawn' : failed ? 'failed' : 'loading'}
      >
        <path d={graticulePath} fill="none" stroke="var(--sf-plot-grid)" strokeWidth={0.5} />
        {drawnOutlines ? (
          <g data-layer="outlines">
            <path d={drawnOutlines.land} fill="var(--sf-raised)" stroke="var(--sf-line-strong)" strokeWidth={0.8} />
            <path d={drawnOutlines.borders} fill="none" stroke="var(--sf-ink-muted)" strokeWidth={0.8} strokeDasharray="4 2" />
          </g>
        ) : null}
        {ellipse ? <path d={path(ellipse) ?? ''} fill="var(--sf-plot-4)" fillOpacity={0.15} stroke="var(--sf-plot-4)" strokeWidth={1.5} data-layer="ellipse" /> : null}
        {geometry.stations.map((s) => {
          const p = projection([s.longitude, s.latitude]);
          if (!p) return null;
          const [x, y] = p;
          return (
            <g key={s.station} data-station={s.station} data-member={s.member ? 'yes' : 'no'}>
              <path d={`M${x},${y - 7}L${x + 6},${y + 4}L${x - 6},${y + 4}Z`} fill={s.member ? 'var(--sf-plot-2)' : 'none'} stroke={s.member ? 'var(--sf-ink)' : 'var(--sf-ink-muted)'} strokeWidth={1.2} />
              <text x={x + 8} y={y + 4} fontSize={11} fontFamily="IBM Plex Mono, monospace" fill={s.member ? 'var(--sf-ink)' : 'var(--sf-ink-muted)'}>
                {s.station.split('.')[1]}
              </text>
            </g>
          );
        })}
        {epi ? (
          <g data-layer="epicentre">
            <circle cx={epi[0]} cy={epi[1]} r={6} fill="none" stroke="var(--sf-plot-4)" strokeWidth={2} />
            <path d={`M${epi[0] - 9},${epi[1]}H${epi[0] + 9}M${epi[0]},${epi[1] - 9}V${epi[1] + 9}`} stroke="var(--sf-plot-4)" strokeWidth={1.5} />
          </g>
        ) : null}
        {barPx > 0 ? (
          <g>
            <path d={`M12,${H - 14}h${barPx}`} stroke="var(--sf-ink)" strokeWidth={2} />
            <text x={12} y={H - 18} fontSize={11} fontFamily="IBM Plex Mono, monospace" fill="var(--sf-ink)">
              {barKm} km
            </text>
          </g>
        ) : null}
      </svg>
      <p className="mt-1 text-xs text-ink-muted">
        ▲ filled: recorded this event; △ hollow: other stations. ⊕ epicentre, shaded: its 68 % ellipse. Outlines: Natural Earth 1:50m (public domain, world-atlas package), drawn offline.
        {failed ? ` The outlines could not be loaded (${failed}).` : ''}
      </p>
    </figure>
  );
});
