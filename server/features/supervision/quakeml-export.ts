import type { z } from 'zod';
import type { originViewSchema } from '@shared/schemas/events';
import type { EvaluationStatus } from '@shared/schemas/supervisor';

/**
 * The reviewed catalogue as QuakeML 1.2 (pure builder).
 *
 * Element names follow the QuakeML 1.2 Basic Event Description (BED): `q:quakeml` (namespace
 * http://quakeml.org/xmlns/quakeml/1.2) holds one `eventParameters` (namespace
 * http://quakeml.org/xmlns/bed/1.2) with `comment`, `creationInfo` and `event` children. An event
 * has `preferredOriginID`, `preferredMagnitudeID`, `type`, `typeCertainty`, `comment`,
 * `creationInfo`, and `origin`, `magnitude`, `stationMagnitude`, `amplitude` and `pick` children.
 * An `origin` has `time`, `latitude`, `longitude`, `depth` (m), `depthType`, `methodID`,
 * `earthModelID`, `quality` (OriginQuality: phase and station counts, `standardError` = RMS s,
 * `azimuthalGap` and `minimumDistance` in degrees), `originUncertainty` (horizontal uncertainties in
 * m, the ellipse's azimuth, `preferredDescription`, `confidenceLevel`), `arrival`s (`pickID`,
 * `phase`, `azimuth`, `distance` in degrees, `takeoffAngle`, `timeResidual`, `timeWeight`,
 * `earthModelID`), `evaluationMode`, `evaluationStatus`, `comment`, `creationInfo`. Amplitudes carry
 * `genericAmplitude` (m), `type`, `category`, `unit`, `period`, `timeWindow`, `waveformID`;
 * station magnitudes `originID`, `mag`, `type`, `amplitudeID`, `waveformID`; magnitudes `mag`,
 * `type`, `originID`, `methodID`, `stationCount`, `stationMagnitudeContribution`s. Checked against
 * the QuakeML-BED-1.2 RelaxNG schema's element names (tests/server/features/supervision).
 *
 * Resource identifiers are `smi:` URIs of our own (`smi:seisift.local/event/123`) that match the
 * schema's ResourceIdentifier pattern; a network that publishes the catalogue sets its own authority
 * id (the part after `smi:`) in the export options. In QuakeML 1.2 an Event has no evaluationStatus
 * of its own: the supervisor's status goes on the origin, magnitude and picks, and in an event
 * comment with id `…/evaluation-status`. An event without a location (a reviewed window no event
 * holds) carries its picks only and says why.
 */

/** The QuakeML 1.2 ResourceIdentifier pattern (QuakeML-BED-1.2 schema), anchored. */
export const QUAKEML_RESOURCE_ID = /^(smi|quakeml):[\w\d][\w\d\-.*()_~']{2,}\/[\w\d\-.*()_~'][\w\d\-.*()+?_~'=,;#/&]*$/u;

/** The caution exported with every location and magnitude. */
export const EXPORT_CAUTION =
  "Locations and magnitudes are triage aids with the uncertainties given (68 %): they need an analyst's review, and public information and warnings follow the network's own procedures and local authorities.";

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
  /** `manual` (an analyst's; the default) or `automatic` (a suggestion the location used). */
  evaluationMode?: 'manual' | 'automatic';
  /** 1-σ time uncertainty, s. */
  uncertaintyS?: number;
}

/**
 * The location and magnitude of an exported event (its preferred origin): the API's origin view
 * (shared/schemas/events.ts, `time` ISO 8601 UTC) with the uncertainty flattened as QuakeML has it.
 */
export type CatalogueLocation = Pick<z.infer<typeof originViewSchema>, 'time' | 'latitude' | 'longitude' | 'depthKm' | 'depthFixed' | 'depthFixedReason' | 'rmsS' | 'azimuthalGapDeg' | 'minimumDistanceKm' | 'usedPhases' | 'usedStations' | 'evaluationMode' | 'author' | 'notes'> & {
  /** Local id of the origin (unique in the export). */
  originId: string;
  ellipse: { semiMajorKm: number; semiMinorKm: number; azimuthDeg: number };
  depthKm68: number | null;
  timeS68: number;
  modelName: string;
  creationTime: string;
  arrivals: Array<{ pickId: string | null; phase: string; modelPhase: string; residualS: number; distanceKm: number; azimuthDeg: number; takeoffAngleDeg: number; weight: number }>;
  amplitudes: Array<{ id: string; streamId: string; amplitudeMm: number; periodS: number | null; time: string; evaluationMode: 'manual' | 'automatic' }>;
  stationMagnitudes: Array<{ id: string; station: string; streamIds: string[]; value: number; amplitudeIds: string[] }>;
  magnitude: { id: string; value: number; uncertainty: number | null; stationCount: number; method: string; evaluationMode: 'manual' | 'automatic' } | null;
};

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
  /** The preferred origin with its magnitude; absent for a reviewed window that no event holds. */
  location?: CatalogueLocation;
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

/** Kilometres per degree of arc on the sphere R = 6371 km (common practice for QuakeML distances in degrees). */
const KM_PER_DEGREE = (6371 * Math.PI) / 180;

/** A compact UTC stamp for ids (`20260314T000000Z`): no `:`, which the ResourceIdentifier pattern refuses. */
export function idStamp(iso: string): string {
  return iso.replace(/\.\d+/u, '').replace(/[-:]/gu, '');
}

/** A number as QuakeML writes it (no exponent trouble for the values here; at most 6 decimals). */
const num = (v: number): string => String(Number(v.toFixed(6)));

/**
 * Builds a QuakeML 1.2 document (UTF-8; see the module comment).
 * @throws RangeError for a malformed authority, stream id, an id outside the ResourceIdentifier
 *   pattern, or a text XML cannot carry
 */
export function buildQuakeml(events: readonly CatalogueEvent[], opts: QuakemlOptions): string {
  const authority = opts.authority ?? 'seisift.local';
  if (!AUTHORITY_RE.test(authority)) throw new RangeError(`authority "${authority}" is not a valid smi: authority id (letters, digits, - . _ ~ and /)`);
  const smi = (path: string) => {
    const id = `smi:${authority}/${path}`;
    if (!QUAKEML_RESOURCE_ID.test(id)) throw new RangeError(`resource id "${id}" does not match the QuakeML ResourceIdentifier pattern`);
    return xmlEscape(id);
  };
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
  const quantity = (indent: number, name: string, value: string, uncertainty?: number | null, confidence?: number) => {
    push(indent, `<${name}>`);
    push(indent + 1, `<value>${value}</value>`);
    if (uncertainty !== undefined && uncertainty !== null) push(indent + 1, `<uncertainty>${num(uncertainty)}</uncertainty>`);
    if (confidence !== undefined && uncertainty !== undefined && uncertainty !== null) push(indent + 1, `<confidenceLevel>${num(confidence)}</confidenceLevel>`);
    push(indent, `</${name}>`);
  };
  const waveform = (indent: number, streamId: string) => {
    const w = waveformId(streamId);
    push(indent, `<waveformID networkCode="${text(w.networkCode)}" stationCode="${text(w.stationCode)}" locationCode="${text(w.locationCode)}" channelCode="${text(w.channelCode)}"/>`);
  };
  const slug = (s: string) => s.toLowerCase().replace(/[^a-z0-9]+/gu, '-').replace(/^-|-$/gu, '') || 'model';

  lines.push('<?xml version="1.0" encoding="UTF-8"?>');
  lines.push('<q:quakeml xmlns:q="http://quakeml.org/xmlns/quakeml/1.2" xmlns="http://quakeml.org/xmlns/bed/1.2">');
  push(1, `<eventParameters publicID="${smi(`catalogue/${idStamp(opts.period.from)}-${idStamp(opts.period.to)}`)}">`);
  comment(2, `Reviewed catalogue exported by Seisift for ${opts.period.from} to ${opts.period.to}. ${EXPORT_CAUTION}`);
  creationInfo(2, null, opts.createdAt);
  for (const ev of events) {
    const loc = ev.location;
    push(2, `<event publicID="${smi(`event/${ev.localId}`)}">`);
    if (loc) {
      push(3, `<preferredOriginID>${smi(`origin/${loc.originId}`)}</preferredOriginID>`);
      if (loc.magnitude) push(3, `<preferredMagnitudeID>${smi(`magnitude/${loc.magnitude.id}`)}</preferredMagnitudeID>`);
    }
    push(3, `<type>${text(ev.eventType)}</type>`);
    push(3, `<typeCertainty>${text(ev.certainty)}</typeCertainty>`);
    comment(3, ev.evaluationStatus, `event/${ev.localId}/evaluation-status`);
    comment(3, loc ? `Event time ${ev.time} (${ev.timeBasis}); stations ${ev.stations.join(', ') || 'none'}. ${EXPORT_CAUTION}` : `Event time ${ev.time} (${ev.timeBasis}); stations ${ev.stations.join(', ') || 'none'}. Not located: a reviewed window that no multi-station event holds.`);
    if (ev.reviewer) comment(3, `Reviewed by ${ev.reviewer}`);
    for (const c of ev.comments) if (c.trim() !== '') comment(3, c);
    creationInfo(3, ev.author, ev.creationTime);
    if (loc) {
      push(3, `<origin publicID="${smi(`origin/${loc.originId}`)}">`);
      quantity(4, 'time', text(loc.time), loc.timeS68, 68);
      quantity(4, 'latitude', num(loc.latitude));
      quantity(4, 'longitude', num(loc.longitude));
      quantity(4, 'depth', num(loc.depthKm * 1000), loc.depthKm68 === null ? null : loc.depthKm68 * 1000, 68);
      push(4, `<depthType>${loc.depthFixed ? 'operator assigned' : 'from location'}</depthType>`);
      push(4, `<methodID>${smi('method/grid-search-geiger')}</methodID>`);
      push(4, `<earthModelID>${smi(`velocity-model/${slug(loc.modelName)}`)}</earthModelID>`);
      push(4, '<quality>');
      push(5, `<associatedPhaseCount>${loc.arrivals.length}</associatedPhaseCount>`);
      push(5, `<usedPhaseCount>${loc.usedPhases}</usedPhaseCount>`);
      push(5, `<usedStationCount>${loc.usedStations}</usedStationCount>`);
      push(5, `<standardError>${num(loc.rmsS)}</standardError>`);
      push(5, `<azimuthalGap>${num(loc.azimuthalGapDeg)}</azimuthalGap>`);
      push(5, `<minimumDistance>${num(loc.minimumDistanceKm / KM_PER_DEGREE)}</minimumDistance>`);
      push(4, '</quality>');
      push(4, '<originUncertainty>');
      push(5, `<horizontalUncertainty>${num(loc.ellipse.semiMajorKm * 1000)}</horizontalUncertainty>`);
      push(5, `<minHorizontalUncertainty>${num(loc.ellipse.semiMinorKm * 1000)}</minHorizontalUncertainty>`);
      push(5, `<maxHorizontalUncertainty>${num(loc.ellipse.semiMajorKm * 1000)}</maxHorizontalUncertainty>`);
      push(5, `<azimuthMaxHorizontalUncertainty>${num(loc.ellipse.azimuthDeg)}</azimuthMaxHorizontalUncertainty>`);
      push(5, '<preferredDescription>uncertainty ellipse</preferredDescription>');
      push(5, '<confidenceLevel>68</confidenceLevel>');
      push(4, '</originUncertainty>');
      loc.arrivals.forEach((a, k) => {
        push(4, `<arrival publicID="${smi(`origin/${loc.originId}/arrival/${k}`)}">`);
        push(5, `<pickID>${smi(`pick/${a.pickId ?? `${loc.originId}-unlinked-${k}`}`)}</pickID>`);
        push(5, `<phase>${text(a.modelPhase)}</phase>`);
        push(5, `<azimuth>${num(a.azimuthDeg)}</azimuth>`);
        push(5, `<distance>${num(a.distanceKm / KM_PER_DEGREE)}</distance>`);
        quantity(5, 'takeoffAngle', num(a.takeoffAngleDeg));
        push(5, `<timeResidual>${num(a.residualS)}</timeResidual>`);
        push(5, `<timeWeight>${num(a.weight)}</timeWeight>`);
        push(4, '</arrival>');
      });
      push(4, `<evaluationMode>${loc.evaluationMode}</evaluationMode>`);
      push(4, `<evaluationStatus>${text(ev.evaluationStatus)}</evaluationStatus>`);
      if (loc.depthFixedReason) comment(4, `Depth fixed: ${loc.depthFixedReason}`);
      for (const n of loc.notes) comment(4, n);
      creationInfo(4, loc.author, loc.creationTime);
      push(3, '</origin>');
      for (const a of loc.amplitudes) {
        push(3, `<amplitude publicID="${smi(`amplitude/${a.id}`)}">`);
        quantity(4, 'genericAmplitude', num(a.amplitudeMm / 1000));
        push(4, '<type>ML</type>');
        push(4, '<category>point</category>');
        push(4, '<unit>m</unit>');
        push(4, `<methodID>${smi('method/wood-anderson-zero-to-peak')}</methodID>`);
        if (a.periodS !== null) quantity(4, 'period', num(a.periodS));
        waveform(4, a.streamId);
        push(4, `<scalingTime><value>${text(a.time)}</value></scalingTime>`);
        push(4, `<evaluationMode>${a.evaluationMode}</evaluationMode>`);
        comment(4, 'Zero-to-peak Wood-Anderson amplitude (T0 0.8 s, h 0.7, magnification 2080) from the instrument-corrected ground motion; genericAmplitude in m of the simulated trace.');
        push(3, '</amplitude>');
      }
      for (const m of loc.stationMagnitudes) {
        push(3, `<stationMagnitude publicID="${smi(`station-magnitude/${m.id}`)}">`);
        push(4, `<originID>${smi(`origin/${loc.originId}`)}</originID>`);
        quantity(4, 'mag', num(m.value));
        push(4, '<type>ML</type>');
        if (m.amplitudeIds[0]) push(4, `<amplitudeID>${smi(`amplitude/${m.amplitudeIds[0]}`)}</amplitudeID>`);
        const first = m.streamIds[0];
        if (first) {
          const w = waveformId(first);
          push(4, `<waveformID networkCode="${text(w.networkCode)}" stationCode="${text(w.stationCode)}" locationCode="${text(w.locationCode)}"/>`);
        }
        if (m.streamIds.length > 1) comment(4, `Mean of the ML of ${m.streamIds.join(', ')}`);
        push(3, '</stationMagnitude>');
      }
      if (loc.magnitude) {
        const mg = loc.magnitude;
        push(3, `<magnitude publicID="${smi(`magnitude/${mg.id}`)}">`);
        quantity(4, 'mag', num(mg.value), mg.uncertainty);
        push(4, '<type>ML</type>');
        push(4, `<originID>${smi(`origin/${loc.originId}`)}</originID>`);
        push(4, `<methodID>${smi('method/median-of-station-ml')}</methodID>`);
        push(4, `<stationCount>${mg.stationCount}</stationCount>`);
        push(4, `<evaluationMode>${mg.evaluationMode}</evaluationMode>`);
        push(4, `<evaluationStatus>${text(ev.evaluationStatus)}</evaluationStatus>`);
        comment(4, `${mg.method}; −log A0 of Hutton & Boore (1987). ${EXPORT_CAUTION}`);
        for (const m of loc.stationMagnitudes) {
          push(4, '<stationMagnitudeContribution>');
          push(5, `<stationMagnitudeID>${smi(`station-magnitude/${m.id}`)}</stationMagnitudeID>`);
          push(5, `<residual>${num(m.value - mg.value)}</residual>`);
          push(4, '</stationMagnitudeContribution>');
        }
        push(3, '</magnitude>');
      }
    }
    for (const p of ev.picks) {
      push(3, `<pick publicID="${smi(`pick/${p.id}`)}">`);
      quantity(4, 'time', text(p.time), p.uncertaintyS ?? null);
      waveform(4, p.streamId);
      push(4, `<onset>${text(p.onset)}</onset>`);
      push(4, `<phaseHint>${text(p.phase)}</phaseHint>`);
      push(4, `<polarity>${text(p.polarity)}</polarity>`);
      push(4, `<evaluationMode>${p.evaluationMode ?? 'manual'}</evaluationMode>`);
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
