import { EXPORT_CAUTION, type CatalogueEvent } from './quakeml-export';

/**
 * The reviewed catalogue as CSV (RFC 4180: comma-separated, CRLF line ends, fields holding a comma,
 * quote, CR or LF are quoted with inner quotes doubled). One row per event: its preferred origin
 * (time, latitude, longitude °, depth km, whether the depth was fixed, the 68 % ellipse's semi-major
 * axis km, RMS s, azimuthal gap °, stations used) and ML (value, 1.4826·MAD uncertainty, station
 * count), empty for a reviewed window no located event holds; type, status, picks summarised in one
 * field as `phase@stream@time` joined by `;`, and the caution on every row.
 */

/** The header row, in column order. */
export const catalogueCsvColumns = [
  'event_id',
  'event_time',
  'event_time_basis',
  'origin_time',
  'latitude',
  'longitude',
  'depth_km',
  'depth_fixed',
  'horizontal_uncertainty_km_68',
  'ml',
  'ml_uncertainty',
  'ml_station_count',
  'used_stations',
  'azimuthal_gap_deg',
  'rms_s',
  'location_mode',
  'event_type',
  'type_certainty',
  'evaluation_status',
  'stations',
  'pick_count',
  'picks',
  'labelled_by',
  'reviewed_by',
  'created_at',
  'comments',
  'caution',
] as const;

/** Quotes one field when RFC 4180 needs it; a leading = + - @ is prefixed with ' so spreadsheets do not run it as a formula. */
export function csvField(value: string): string {
  const safe = /^[=+\-@]/.test(value) ? `'${value}` : value;
  return /[",\r\n]/.test(safe) ? `"${safe.replace(/"/g, '""')}"` : safe;
}

/**
 * Builds the CSV text for `events`.
 * @param authority the smi: authority of the event ids (as in the QuakeML export)
 */
export function buildCatalogueCsv(events: readonly CatalogueEvent[], authority = 'seisift.local'): string {
  const rows: string[][] = [[...catalogueCsvColumns]];
  for (const ev of events) {
    const loc = ev.location;
    const n = (v: number | null | undefined, digits: number): string => (v === null || v === undefined ? '' : v.toFixed(digits));
    rows.push([
      `smi:${authority}/event/${ev.localId}`,
      ev.time,
      ev.timeBasis,
      loc?.time ?? '',
      n(loc?.latitude, 5),
      n(loc?.longitude, 5),
      n(loc?.depthKm, 2),
      loc ? String(loc.depthFixed) : '',
      n(loc?.ellipse.semiMajorKm, 2),
      n(loc?.magnitude?.value, 2),
      n(loc?.magnitude?.uncertainty, 2),
      loc?.magnitude ? String(loc.magnitude.stationCount) : '',
      loc ? String(loc.usedStations) : '',
      n(loc?.azimuthalGapDeg, 1),
      n(loc?.rmsS, 3),
      loc?.evaluationMode ?? '',
      ev.eventType,
      ev.certainty,
      ev.evaluationStatus,
      ev.stations.join(' '),
      String(ev.picks.length),
      ev.picks.map((p) => `${p.phase}@${p.streamId}@${p.time}`).join(';'),
      ev.author ?? '',
      ev.reviewer ?? '',
      ev.creationTime,
      ev.comments.filter((c) => c.trim() !== '').join(' | '),
      loc ? EXPORT_CAUTION : '',
    ]);
  }
  return rows.map((r) => r.map(csvField).join(',')).join('\r\n') + '\r\n';
}
