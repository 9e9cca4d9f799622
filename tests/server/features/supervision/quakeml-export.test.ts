import { execFileSync } from 'node:child_process';
import { XMLParser, XMLValidator } from 'fast-xml-parser';
import { describe, expect, it } from 'vitest';
import { buildCatalogueCsv, catalogueCsvColumns, csvField } from '@server/features/supervision/catalogue-csv';
import { buildQuakeml, idStamp, QUAKEML_RESOURCE_ID, waveformId, xmlEscape, type CatalogueEvent, type CatalogueLocation } from '@server/features/supervision/quakeml-export';

const events: CatalogueEvent[] = [
  {
    localId: 'candidate/3',
    eventType: 'earthquake',
    certainty: 'known',
    evaluationStatus: 'confirmed',
    time: '2026-03-14T09:26:53.589Z',
    timeBasis: 'earliest P pick',
    author: 'Duty analyst A',
    reviewer: 'Supervisor B',
    creationTime: '2026-03-14T10:00:00.000Z',
    stations: ['XX.KV01', 'XX.KV02'],
    picks: [
      { id: 'item/11/0', phase: 'P', time: '2026-03-14T09:26:53.589123Z', onset: 'impulsive', polarity: 'positive', streamId: 'XX.KV01.00.HHZ', evaluationStatus: 'confirmed', author: 'Duty analyst A' },
      { id: 'item/12/0', phase: 'S', time: '2026-03-14T09:26:57.100Z', onset: 'emergent', polarity: 'undecidable', streamId: 'XX.KV02..HHN', evaluationStatus: 'confirmed', author: null },
    ],
    comments: ['felt <nearby> & "clear", on KV01\nsecond line'],
  },
  {
    localId: 'item/20',
    eventType: 'quarry blast',
    certainty: 'suspected',
    evaluationStatus: 'final',
    time: '2026-03-14T12:01:00.000Z',
    timeBasis: 'earliest trigger',
    author: null,
    reviewer: null,
    creationTime: '2026-03-14T12:30:00.000Z',
    stations: ['XX.KV04'],
    picks: [],
    comments: [],
  },
];
const location: CatalogueLocation = {
  originId: '7-31',
  time: '2026-03-14T03:17:22.382Z',
  latitude: 46.226,
  longitude: 11.077,
  depthKm: 4.8,
  depthFixed: false,
  depthFixedReason: null,
  ellipse: { semiMajorKm: 0.8, semiMinorKm: 0.5, azimuthDeg: 56.4 },
  depthKm68: 0.6,
  timeS68: 0.05,
  rmsS: 0.12,
  azimuthalGapDeg: 150.7,
  minimumDistanceKm: 3.04,
  usedPhases: 2,
  usedStations: 1,
  evaluationMode: 'automatic',
  modelName: 'Kestrel Valley demo half-space',
  author: null,
  creationTime: '2026-03-14T03:20:00.000Z',
  notes: ['2 automatic picks (suggestions for an analyst to confirm)'],
  arrivals: [
    { pickId: 'event-7-1', phase: 'P', modelPhase: 'Pg', residualS: -0.12, distanceKm: 5.8, azimuthDeg: 14, takeoffAngleDeg: 120, weight: 1 },
    { pickId: 'event-7-2', phase: 'S', modelPhase: 'Sg', residualS: 0.04, distanceKm: 5.8, azimuthDeg: 14, takeoffAngleDeg: 120, weight: 0.25 },
  ],
  amplitudes: [{ id: '7-31-5', streamId: 'XX.KV02.00.HHN', amplitudeMm: 0.2012, periodS: 0.21, time: '2026-03-14T03:17:24.500Z', evaluationMode: 'automatic' }],
  stationMagnitudes: [{ id: '7-31-0', station: 'XX.KV02', streamIds: ['XX.KV02.00.HHN'], value: 0.88, amplitudeIds: ['7-31-5'] }],
  magnitude: { id: '7-31', value: 0.88, uncertainty: null, stationCount: 1, method: 'median of 1 station ML', evaluationMode: 'automatic' },
};
events.push({
  localId: 'event/7',
  eventType: 'earthquake',
  certainty: 'suspected',
  evaluationStatus: 'reviewed',
  time: location.time,
  timeBasis: 'origin time',
  author: null,
  reviewer: 'Supervisor B',
  creationTime: '2026-03-14T04:00:00.000Z',
  stations: ['XX.KV02'],
  picks: [
    { id: 'event-7-1', phase: 'P', time: '2026-03-14T03:17:23.520Z', onset: 'impulsive', polarity: 'positive', streamId: 'XX.KV02.00.HHZ', evaluationStatus: 'reviewed', author: null, evaluationMode: 'automatic', uncertaintyS: 0.05 },
    { id: 'event-7-2', phase: 'S', time: '2026-03-14T03:17:24.410Z', onset: 'emergent', polarity: 'undecidable', streamId: 'XX.KV02.00.HHN', evaluationStatus: 'reviewed', author: null, evaluationMode: 'automatic', uncertaintyS: 0.1 },
  ],
  comments: [],
  location,
});
const opts = { createdAt: '2026-03-15T00:00:00.000Z', period: { from: '2026-03-14T00:00:00.000Z', to: '2026-03-15T00:00:00.000Z' } };

type Node = Record<string, unknown>;
const asArray = (v: unknown): unknown[] => (v === undefined ? [] : Array.isArray(v) ? v : [v]);
const obj = (v: unknown): Node => {
  if (typeof v !== 'object' || v === null || Array.isArray(v)) throw new Error(`expected an element, got ${JSON.stringify(v)}`);
  return v as Node;
};

/**
 * Structural check against the QuakeML 1.2 BED RelaxNG schema (QuakeML-BED-1.2.rng, as published by
 * the QuakeML project and shipped with ObsPy; element names and enumerations read from it): the root
 * `quakeml` in namespace http://quakeml.org/xmlns/quakeml/1.2; `eventParameters` (BED namespace
 * http://quakeml.org/xmlns/bed/1.2); for Event, Origin, OriginQuality, OriginUncertainty, Arrival,
 * Pick, Amplitude, StationMagnitude, Magnitude and StationMagnitudeContribution the child elements
 * the schema defines (no others), the required ones present, the enumerations respected, and every
 * publicID, comment id and *ID reference matching the schema's ResourceIdentifier pattern
 * (smi|quakeml):[\w\d][\w\d\-\.\*\(\)_~']{2,}/[\w\d\-\.\*\(\)_~'][\w\d\-\.\*\(\)\+\?_~'=,;#/&]*.
 */
const BED = {
  event: { allowed: ['description', 'comment', 'focalMechanism', 'amplitude', 'magnitude', 'stationMagnitude', 'origin', 'pick', 'preferredOriginID', 'preferredMagnitudeID', 'preferredFocalMechanismID', 'type', 'typeCertainty', 'creationInfo'], required: [] },
  origin: { allowed: ['compositeTime', 'comment', 'originUncertainty', 'arrival', 'time', 'longitude', 'latitude', 'depth', 'depthType', 'timeFixed', 'epicenterFixed', 'referenceSystemID', 'methodID', 'earthModelID', 'quality', 'type', 'region', 'evaluationMode', 'evaluationStatus', 'creationInfo'], required: ['time', 'longitude', 'latitude'] },
  quality: { allowed: ['associatedPhaseCount', 'usedPhaseCount', 'associatedStationCount', 'usedStationCount', 'depthPhaseCount', 'standardError', 'azimuthalGap', 'secondaryAzimuthalGap', 'groundTruthLevel', 'maximumDistance', 'minimumDistance', 'medianDistance'], required: [] },
  originUncertainty: { allowed: ['horizontalUncertainty', 'minHorizontalUncertainty', 'maxHorizontalUncertainty', 'azimuthMaxHorizontalUncertainty', 'confidenceEllipsoid', 'preferredDescription', 'confidenceLevel'], required: [] },
  arrival: { allowed: ['comment', 'pickID', 'phase', 'timeCorrection', 'azimuth', 'distance', 'takeoffAngle', 'timeResidual', 'horizontalSlownessResidual', 'backazimuthResidual', 'timeWeight', 'horizontalSlownessWeight', 'backazimuthWeight', 'earthModelID', 'creationInfo'], required: ['pickID', 'phase'] },
  pick: { allowed: ['comment', 'time', 'waveformID', 'filterID', 'methodID', 'horizontalSlowness', 'backazimuth', 'slownessMethodID', 'onset', 'phaseHint', 'polarity', 'evaluationMode', 'evaluationStatus', 'creationInfo'], required: ['time', 'waveformID'] },
  amplitude: { allowed: ['comment', 'genericAmplitude', 'type', 'category', 'unit', 'methodID', 'period', 'snr', 'timeWindow', 'pickID', 'waveformID', 'filterID', 'scalingTime', 'magnitudeHint', 'evaluationMode', 'evaluationStatus', 'creationInfo'], required: ['genericAmplitude'] },
  stationMagnitude: { allowed: ['comment', 'originID', 'mag', 'type', 'amplitudeID', 'methodID', 'waveformID', 'creationInfo'], required: ['originID', 'mag'] },
  magnitude: { allowed: ['comment', 'stationMagnitudeContribution', 'mag', 'type', 'originID', 'methodID', 'stationCount', 'azimuthalGap', 'evaluationMode', 'evaluationStatus', 'creationInfo'], required: ['mag'] },
  stationMagnitudeContribution: { allowed: ['stationMagnitudeID', 'residual', 'weight'], required: ['stationMagnitudeID'] },
} as const;
const ENUMS: Record<string, readonly string[]> = {
  evaluationMode: ['manual', 'automatic'],
  evaluationStatus: ['preliminary', 'confirmed', 'reviewed', 'final', 'rejected'],
  onset: ['emergent', 'impulsive', 'questionable'],
  polarity: ['positive', 'negative', 'undecidable'],
  typeCertainty: ['known', 'suspected'],
  depthType: ['from location', 'from moment tensor inversion', 'from modeling of broad-band P waveforms', 'constrained by depth phases', 'constrained by direct phases', 'constrained by depth and direct phases', 'operator assigned', 'other'],
  preferredDescription: ['horizontal uncertainty', 'uncertainty ellipse', 'confidence ellipsoid'],
  category: ['point', 'mean', 'duration', 'period', 'integral', 'other'],
  unit: ['m', 's', 'm/s', 'm/(s*s)', 'm*s', 'dimensionless', 'other'],
};
const ID_ELEMENTS = ['preferredOriginID', 'preferredMagnitudeID', 'pickID', 'originID', 'amplitudeID', 'methodID', 'earthModelID', 'stationMagnitudeID'];

function checkQuakemlStructure(doc: Node): string[] {
  const problems: string[] = [];
  const root = obj(doc['q:quakeml']);
  if (root['@_xmlns:q'] !== 'http://quakeml.org/xmlns/quakeml/1.2') problems.push('root namespace');
  if (root['@_xmlns'] !== 'http://quakeml.org/xmlns/bed/1.2') problems.push('BED default namespace');
  const ep = obj(root.eventParameters);
  const idOk = (v: unknown, where: string) => {
    if (typeof v !== 'string' || !QUAKEML_RESOURCE_ID.test(v)) problems.push(`${where}: id ${String(v)} outside the ResourceIdentifier pattern`);
  };
  idOk(ep['@_publicID'], 'eventParameters');
  const visit = (kind: keyof typeof BED, n: Node, where: string) => {
    const spec = BED[kind];
    for (const k of Object.keys(n)) {
      if (k.startsWith('@_')) continue;
      if (!(spec.allowed as readonly string[]).includes(k)) problems.push(`${where}: ${k} is not a child of ${kind} in QuakeML-BED-1.2`);
    }
    for (const r of spec.required) if (n[r] === undefined) problems.push(`${where}: required ${r} missing`);
    if (kind !== 'quality' && kind !== 'originUncertainty' && kind !== 'stationMagnitudeContribution') idOk(n['@_publicID'], `${where} publicID`);
    for (const [k, values] of Object.entries(ENUMS)) for (const v of asArray(n[k])) if (typeof v === 'string' && !values.includes(v)) problems.push(`${where}: ${k} ${v} outside its enumeration`);
    for (const k of ID_ELEMENTS) for (const v of asArray(n[k])) idOk(v, `${where} ${k}`);
    for (const c of asArray(n.comment).map(obj)) {
      if (c.text === undefined) problems.push(`${where}: comment without text`);
      if (c['@_id'] !== undefined) idOk(c['@_id'], `${where} comment id`);
    }
    for (const child of ['origin', 'pick', 'amplitude', 'stationMagnitude', 'magnitude', 'quality', 'originUncertainty', 'arrival', 'stationMagnitudeContribution'] as const) {
      if (kind === child) continue;
      if (!(spec.allowed as readonly string[]).includes(child)) continue;
      asArray(n[child]).forEach((c, i) => visit(child, obj(c), `${where} / ${child} ${i}`));
    }
  };
  asArray(ep.event).forEach((e, i) => {
    const ev = obj(e);
    visit('event', ev, `event ${i}`);
    for (const p of asArray(ev.pick).map(obj)) {
      if (typeof obj(p.time).value !== 'string') problems.push('pick time value');
      const w = obj(p.waveformID);
      if (typeof w['@_networkCode'] !== 'string' || typeof w['@_stationCode'] !== 'string') problems.push('pick waveformID codes');
    }
  });
  return problems;
}

const parser = new XMLParser({ ignoreAttributes: false, parseTagValue: false, parseAttributeValue: false, trimValues: true });

describe('QuakeML 1.2 export', () => {
  const xml = buildQuakeml(events, opts);

  it('is well-formed XML (fast-xml-parser validator)', () => {
    expect(XMLValidator.validate(xml)).toBe(true);
  });

  it('is well-formed for a second, independent parser (Python xml.dom.minidom, /usr/bin/python3)', () => {
    const out = execFileSync('/usr/bin/python3', ['-c', 'import sys, xml.dom.minidom as m; d = m.parseString(sys.stdin.buffer.read()); print(d.documentElement.namespaceURI, len(d.getElementsByTagName("pick")))'], { input: xml }).toString().trim();
    expect(out).toBe('http://quakeml.org/xmlns/quakeml/1.2 4');
  });

  it('passes the structural check of QuakeML 1.2 element names', () => {
    expect(checkQuakemlStructure(parser.parse(xml) as Node)).toEqual([]);
  });

  it('parses back to the events, types, statuses and picks that went in', () => {
    const doc = obj(parser.parse(xml) as Node);
    const ev = asArray(obj(obj(doc['q:quakeml']).eventParameters).event).map(obj);
    expect(ev.map((e) => e['@_publicID'])).toEqual(['smi:seisift.local/event/candidate/3', 'smi:seisift.local/event/item/20', 'smi:seisift.local/event/event/7']);
    expect(ev.map((e) => e.type)).toEqual(['earthquake', 'quarry blast', 'earthquake']);
    const first = ev[0] as Node;
    const picks = asArray(first.pick).map(obj);
    expect(picks.map((p) => obj(p.time).value)).toEqual(['2026-03-14T09:26:53.589123Z', '2026-03-14T09:26:57.100Z']);
    expect(picks.map((p) => obj(p.waveformID)['@_channelCode'])).toEqual(['HHZ', 'HHN']);
    expect(obj(picks[1]?.waveformID)['@_locationCode']).toBe('');
    expect(picks.map((p) => p.phaseHint)).toEqual(['P', 'S']);
    expect(picks.map((p) => p.evaluationStatus)).toEqual(['confirmed', 'confirmed']);
    const comments = asArray(first.comment).map((c) => obj(c).text);
    expect(comments).toContain('confirmed');
    expect(comments).toContain('felt <nearby> & "clear", on KV01\nsecond line');
    expect(obj(first.creationInfo).author).toBe('Duty analyst A');
    expect(asArray((ev[1] as Node).pick)).toHaveLength(0);
  });

  it('a located event carries its origin (68 % ellipse in m, quality, arrivals), amplitudes, station magnitudes and ML, parsed back in QuakeML units', () => {
    const doc = obj(parser.parse(xml) as Node);
    const ev = obj(asArray(obj(obj(doc['q:quakeml']).eventParameters).event)[2]);
    const origin = obj(ev.origin);
    expect(ev.preferredOriginID).toBe('smi:seisift.local/origin/7-31');
    expect(ev.preferredMagnitudeID).toBe('smi:seisift.local/magnitude/7-31');
    expect(obj(origin.time)).toMatchObject({ value: '2026-03-14T03:17:22.382Z', uncertainty: '0.05', confidenceLevel: '68' });
    expect(obj(origin.depth)).toMatchObject({ value: '4800', uncertainty: '600' });
    expect(origin.depthType).toBe('from location');
    const u = obj(origin.originUncertainty);
    expect(u).toMatchObject({ horizontalUncertainty: '800', minHorizontalUncertainty: '500', maxHorizontalUncertainty: '800', azimuthMaxHorizontalUncertainty: '56.4', preferredDescription: 'uncertainty ellipse', confidenceLevel: '68' });
    const q = obj(origin.quality);
    expect(q).toMatchObject({ usedPhaseCount: '2', usedStationCount: '1', standardError: '0.12', azimuthalGap: '150.7' });
    // km → degrees on the sphere R = 6371 km: 3.04 km / 111.19493 km per degree.
    expect(Number(q.minimumDistance)).toBeCloseTo(3.04 / 111.19492664, 6);
    const arrivals = asArray(origin.arrival).map(obj);
    expect(arrivals.map((a) => [a.pickID, a.phase, a.timeResidual])).toEqual([['smi:seisift.local/pick/event-7-1', 'Pg', '-0.12'], ['smi:seisift.local/pick/event-7-2', 'Sg', '0.04']]);
    expect(Number(arrivals[0]?.distance)).toBeCloseTo(5.8 / 111.19492664, 6);
    const amp = obj(ev.amplitude);
    expect(obj(amp.genericAmplitude).value).toBe('0.000201');
    expect(amp.unit).toBe('m');
    const sm = obj(ev.stationMagnitude);
    expect([sm.originID, obj(sm.mag).value, sm.amplitudeID]).toEqual(['smi:seisift.local/origin/7-31', '0.88', 'smi:seisift.local/amplitude/7-31-5']);
    const mag = obj(ev.magnitude);
    expect([mag.type, obj(mag.mag).value, mag.stationCount, mag.evaluationStatus]).toEqual(['ML', '0.88', '1', 'reviewed']);
    expect(obj(mag.stationMagnitudeContribution).stationMagnitudeID).toBe('smi:seisift.local/station-magnitude/7-31-0');
    expect(asArray(ev.pick).map((p) => obj(p).evaluationMode)).toEqual(['automatic', 'automatic']);
    expect(xml).toMatch(/triage aids with the uncertainties given/);
  });

  it('every id matches the QuakeML ResourceIdentifier pattern, also the catalogue id that holds the period; the authority is the one given', () => {
    expect(xml).toMatch(/publicID="smi:seisift\.local\/catalogue\/20260314T000000Z-20260315T000000Z"/);
    expect(idStamp('2026-03-14T09:26:53.589Z')).toBe('20260314T092653Z');
    // The pattern itself (QuakeML-BED-1.2): a ':' in the path, a two-character authority and a space are outside it.
    expect(QUAKEML_RESOURCE_ID.test('smi:seisift.local/catalogue/2026-03-14T00:00:00.000Z')).toBe(false);
    expect(QUAKEML_RESOURCE_ID.test('smi:ab/event/1')).toBe(false);
    expect(QUAKEML_RESOURCE_ID.test('smi:seisift.local/event/1 2')).toBe(false);
    expect(QUAKEML_RESOURCE_ID.test('quakeml:seisift.local/event/item/20')).toBe(true);
    expect(buildQuakeml(events, { ...opts, authority: 'xx.example/seisift' })).toMatch(/smi:xx\.example\/seisift\/event\/item\/20/);
    expect(() => buildQuakeml(events, { ...opts, authority: 'bad authority' })).toThrow(/authority/);
    expect(xml).toMatch(/Not located: a reviewed window/);
  });

  it('escapes and refuses text XML cannot carry', () => {
    expect(xmlEscape(`a<b>&"c'`)).toBe('a&lt;b&gt;&amp;&quot;c&apos;');
    expect(() => xmlEscape('bell\u0007')).toThrow(/control character/);
  });

  it('splits stream ids and names a malformed one', () => {
    expect(waveformId('XX.KV03.00.HHZ')).toEqual({ networkCode: 'XX', stationCode: 'KV03', locationCode: '00', channelCode: 'HHZ' });
    expect(() => waveformId('XX.KV03.HHZ')).toThrow(/"XX.KV03.HHZ" is not NET.STA.LOC.CHA/);
  });
});

describe('CSV export', () => {
  const text = buildCatalogueCsv(events);

  it('reads back with Python csv (RFC 4180 quoting; /usr/bin/python3)', () => {
    const out = execFileSync('/usr/bin/python3', ['-c', 'import sys, csv, io, json; print(json.dumps(list(csv.reader(io.StringIO(sys.stdin.read(), newline="")))))'], { input: text }).toString();
    const rows = JSON.parse(out) as string[][];
    expect(rows[0]).toEqual([...catalogueCsvColumns]);
    expect(rows).toHaveLength(4);
    const col = (r: number, name: (typeof catalogueCsvColumns)[number]) => rows[r]?.[catalogueCsvColumns.indexOf(name)];
    expect(col(1, 'event_id')).toBe('smi:seisift.local/event/candidate/3');
    expect(col(1, 'event_type')).toBe('earthquake');
    expect(col(1, 'picks')).toBe('P@XX.KV01.00.HHZ@2026-03-14T09:26:53.589123Z;S@XX.KV02..HHN@2026-03-14T09:26:57.100Z');
    expect(col(1, 'comments')).toBe('felt <nearby> & "clear", on KV01\nsecond line');
    expect(col(1, 'origin_time')).toBe('');
    expect(col(2, 'pick_count')).toBe('0');
    // One row per located event: origin time, position, depth, ML, stations, gap, RMS, type, status.
    expect(['origin_time', 'latitude', 'longitude', 'depth_km', 'ml', 'used_stations', 'azimuthal_gap_deg', 'rms_s', 'event_type', 'evaluation_status'].map((c) => col(3, c as (typeof catalogueCsvColumns)[number]))).toEqual([
      '2026-03-14T03:17:22.382Z', '46.22600', '11.07700', '4.80', '0.88', '1', '150.7', '0.120', 'earthquake', 'reviewed',
    ]);
    expect(col(3, 'caution')).toMatch(/triage aids/);
  });

  it('defuses spreadsheet formulas', () => {
    expect(csvField('=1+2')).toBe("'=1+2");
    expect(csvField('a,b')).toBe('"a,b"');
  });
});
