import type { CatalogueEvent } from './quakeml-export';

/**
 * The reviewed catalogue as CSV (RFC 4180: comma-separated, CRLF line ends, fields holding a comma,
 * quote, CR or LF are quoted with inner quotes doubled). One row per event; picks are summarised in
 * one field as `phase@stream@time` joined by `;`. There is no origin or magnitude column: Seisift
 * does not locate events or compute magnitudes.
 */

/** The header row, in column order. */
export const catalogueCsvColumns = [
  'event_id',
  'event_time',
  'event_time_basis',
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
    rows.push([
      `smi:${authority}/event/${ev.localId}`,
      ev.time,
      ev.timeBasis,
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
    ]);
  }
  return rows.map((r) => r.map(csvField).join(',')).join('\r\n') + '\r\n';
}
