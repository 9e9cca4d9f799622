import type { EvaluationStatus } from '@shared/schemas/supervisor';

/**
 * The reviewed catalogue as QuakeML 1.2 (pure builder).
 *
 * Element names follow the QuakeML 1.2 Basic Event Description (BED) as we remember the
 * QuakeML-BED-1.2 XSD (no copy of the schema can be had on this machine; written from memory):
 * `q:quakeml` (namespace http://quakeml.org/xmlns/quakeml/1.2) holds one `eventParameters`
 * (namespace http://quakeml.org/xmlns/bed/1.2, attribute publicID) with `creationInfo`, `comment`
 * and `event` children. An `event` (publicID) has `type`, `typeCertainty`, `comment`
 * (`text`, optional attribute id), `creationInfo` (`agencyID`, `author`, `creationTime`) and `pick`
 * children. A `pick` (publicID) has `time` (a TimeQuantity: `value`), `waveformID` (attributes
 * networkCode, stationCode, locationCode, channelCode), `onset`, `phaseHint`, `polarity`,
 * `evaluationMode`, `evaluationStatus`, `creationInfo`.
 *
 * In QuakeML 1.2 an Event has no evaluationStatus of its own (Origin, Magnitude, Pick and Amplitude
 * do). Seisift neither locates events nor computes magnitudes, so there is no origin or magnitude:
 * the supervisor's evaluation status goes on every pick of the event and, so that events without
 * picks keep it too, in an event comment with id `…/evaluation-status`. Every pick is manual.
 *
 * Resource identifiers are `smi:` URIs of our own (`smi:seisift.local/event/123`); a network that
 * publishes the catalogue sets its own authority id (the part after `smi:`) in the export options.
 */

/** One pick of an exported event. */
export interface CataloguePick {
  /** Local id (unique within the export), used in the pick's publicID. */
  id: string;
  phase: 'P' | 'S';
  /** ISO 8601 UTC, up to microseconds. */
  time: string;
  onset: 'impulsive' | 'emergent' | 'questionable';
  polarity: 'positive' | 'negative' | 'undecidable';
  /** FDSN NET.STA.LOC.CHA. */
  streamId: string;
  evaluationStatus: EvaluationStatus;
  author: string | null;
}

/** One exported event: a reviewed item, or a candidate event across stations. */
export interface CatalogueEvent {
  /** Local id used in the publicID: `item/12` or `candidate/3`. */
  localId: string;
  eventType: string;
  certainty: 'known' | 'suspected';
  evaluationStatus: EvaluationStatus;
  /** ISO time shown for the event, and how it was found. */
  time: string;
  timeBasis: string;
  /** Who labelled it, who reviewed it (display names). */
  author: string | null;
  reviewer: string | null;
  /** When the label or review was made (ISO). */
  creationTime: string;
  stations: string[];
  picks: CataloguePick[];
  /** Notes and review comments. */
  comments: string[];
}

/** Options of the builder. */
export interface QuakemlOptions {
  /** Authority of the smi: URIs (default `seisift.local`). */
  authority?: string;
  /** Agency id written into creationInfo (optional). */
  agencyId?: string;
  /** ISO time the export was made. */
  createdAt: string;
  /** Period covered, ISO. */
  period: { from: string; to: string };
}

/** Escapes the five XML special characters; refuses characters XML 1.0 cannot carry. */
export function xmlEscape(text: string): string {
  // XML 1.0 allows #x9 #xA #xD and #x20 upwards (minus surrogates handled by the encoder, U+FFFE/U+FFFF).
  // eslint-disable-next-line no-control-regex -- finding the control characters XML 1.0 forbids is the point
  if (/[\u0000-\u0008\u000B\u000C\u000E-\u001F\uFFFE\uFFFF]/.test(text)) {
    throw new RangeError('text holds a control character that XML 1.0 cannot carry');
  }
  return text.replace(/&/g, '&amp;').replace(/</g, '&lt;').replace(/>/g, '&gt;').replace(/"/g, '&quot;').replace(/'/g, '&apos;');
}

const AUTHORITY_RE = /^[\w\-.~*'()]+(\/[\w\-.~*'()]+)*$/;

/** Splits an FDSN stream id into QuakeML WaveformStreamID attributes; throws on a malformed id. */
export function waveformId(streamId: string): { networkCode: string; stationCode: string; locationCode: string; channelCode: string } {
  const parts = streamId.split('.');
  if (parts.length !== 4 || !parts[0] || !parts[1] || !parts[3]) throw new RangeError(`stream id "${streamId}" is not NET.STA.LOC.CHA`);
  return { networkCode: parts[0], stationCode: parts[1], locationCode: parts[2] ?? '', channelCode: parts[3] };
}

/**
 * Builds a QuakeML 1.2 document (UTF-8, no origins or magnitudes; see the module comment).
 * @throws RangeError for a malformed authority, stream id or a text XML cannot carry
 */
export function buildQuakeml(events: readonly CatalogueEvent[], opts: QuakemlOptions): string {
  const authority = opts.authority ?? 'seisift.local';
  if (!AUTHORITY_RE.test(authority)) throw new RangeError(`authority "${authority}" is not a valid smi: authority id (letters, digits, - . _ ~ and /)`);
  const smi = (path: string) => xmlEscape(`smi:${authority}/${path}`);
  const text = (s: string) => xmlEscape(s);
  const lines: string[] = [];
  const push = (indent: number, s: string) => lines.push(`${'  '.repeat(indent)}${s}`);
  const creationInfo = (indent: number, author: string | null, time: string) => {
    push(indent, '<creationInfo>');
    if (opts.agencyId) push(indent + 1, `<agencyID>${text(opts.agencyId)}</agencyID>`);
    if (author) push(indent + 1, `<author>${text(author)}</author>`);
    push(indent + 1, `<creationTime>${text(time)}</creationTime>`);
    push(indent, '</creationInfo>');
  };
  const comment = (indent: number, body: string, id?: string) => {
    push(indent, id ? `<comment id="${smi(id)}">` : '<comment>');
    push(indent + 1, `<text>${text(body)}</text>`);
    push(indent, '</comment>');
  };

  lines.push('<?xml version="1.0" encoding="UTF-8"?>');
  lines.push('<q:quakeml xmlns:q="http://quakeml.org/xmlns/quakeml/1.2" xmlns="http://quakeml.org/xmlns/bed/1.2">');
  push(1, `<eventParameters publicID="${smi(`catalogue/${opts.period.from}/${opts.period.to}`)}">`);
  comment(
    2,
    `Reviewed catalogue exported by Seisift for ${opts.period.from} to ${opts.period.to}. Seisift does not locate events or compute magnitudes: events carry no origin or magnitude, only their type, type certainty, evaluation status and manual picks.`,
  );
  creationInfo(2, null, opts.createdAt);
  for (const ev of events) {
    push(2, `<event publicID="${smi(`event/${ev.localId}`)}">`);
    push(3, `<type>${text(ev.eventType)}</type>`);
    push(3, `<typeCertainty>${text(ev.certainty)}</typeCertainty>`);
    comment(3, ev.evaluationStatus, `event/${ev.localId}/evaluation-status`);
    comment(3, `Event time ${ev.time} (${ev.timeBasis}); stations ${ev.stations.join(', ') || 'none'}. No origin or magnitude: Seisift does not locate events or compute magnitudes.`);
    if (ev.reviewer) comment(3, `Reviewed by ${ev.reviewer}`);
    for (const c of ev.comments) if (c.trim() !== '') comment(3, c);
    creationInfo(3, ev.author, ev.creationTime);
    for (const p of ev.picks) {
      const w = waveformId(p.streamId);
      push(3, `<pick publicID="${smi(`pick/${p.id}`)}">`);
      push(4, '<time>');
      push(5, `<value>${text(p.time)}</value>`);
      push(4, '</time>');
      push(4, `<waveformID networkCode="${text(w.networkCode)}" stationCode="${text(w.stationCode)}" locationCode="${text(w.locationCode)}" channelCode="${text(w.channelCode)}"/>`);
      push(4, `<onset>${text(p.onset)}</onset>`);
      push(4, `<phaseHint>${text(p.phase)}</phaseHint>`);
      push(4, `<polarity>${text(p.polarity)}</polarity>`);
      push(4, '<evaluationMode>manual</evaluationMode>');
      push(4, `<evaluationStatus>${text(p.evaluationStatus)}</evaluationStatus>`);
      creationInfo(4, p.author, ev.creationTime);
      push(3, '</pick>');
    }
    push(2, '</event>');
  }
  push(1, '</eventParameters>');
  lines.push('</q:quakeml>');
  return `${lines.join('\n')}\n`;
}
