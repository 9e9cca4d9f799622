import { execFileSync } from 'node:child_process';
import { XMLParser, XMLValidator } from 'fast-xml-parser';
import { describe, expect, it } from 'vitest';
import { buildCatalogueCsv, catalogueCsvColumns, csvField } from '@server/features/supervision/catalogue-csv';
import { buildQuakeml, waveformId, xmlEscape, type CatalogueEvent } from '@server/features/supervision/quakeml-export';

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
const opts = { createdAt: '2026-03-15T00:00:00.000Z', period: { from: '2026-03-14T00:00:00.000Z', to: '2026-03-15T00:00:00.000Z' } };

type Node = Record<string, unknown>;
const asArray = (v: unknown): unknown[] => (v === undefined ? [] : Array.isArray(v) ? v : [v]);
const obj = (v: unknown): Node => {
  if (typeof v !== 'object' || v === null || Array.isArray(v)) throw new Error(`expected an element, got ${JSON.stringify(v)}`);
  return v as Node;
};

/**
 * Structural check from the QuakeML 1.2 BED as we remember the XSD (no copy of the schema is
 * available here; from memory): the root element `quakeml` in namespace
 * http://quakeml.org/xmlns/quakeml/1.2; `eventParameters` (BED namespace
 * http://quakeml.org/xmlns/bed/1.2) with a required publicID; each `event` with a required publicID
 * and `type` from EventType, `typeCertainty` from EventTypeCertainty; each `comment` with a required
 * `text`; each `pick` with required publicID, `time` with a required `value`, and `waveformID` with
 * required networkCode and stationCode; `onset`, `phaseHint`, `polarity`, `evaluationMode`,
 * `evaluationStatus` from their enumerations; no element QuakeML 1.2 does not define in those places.
 */
function checkQuakemlStructure(doc: Node): string[] {
  const problems: string[] = [];
  const root = obj(doc['q:quakeml']);
  if (root['@_xmlns:q'] !== 'http://quakeml.org/xmlns/quakeml/1.2') problems.push('root namespace');
  if (root['@_xmlns'] !== 'http://quakeml.org/xmlns/bed/1.2') problems.push('BED default namespace');
  const ep = obj(root.eventParameters);
  if (typeof ep['@_publicID'] !== 'string' || !String(ep['@_publicID']).startsWith('smi:')) problems.push('eventParameters publicID');
  const allowedEvent = new Set(['@_publicID', 'preferredOriginID', 'preferredMagnitudeID', 'preferredFocalMechanismID', 'type', 'typeCertainty', 'description', 'comment', 'creationInfo', 'origin', 'magnitude', 'stationMagnitude', 'focalMechanism', 'pick', 'amplitude']);
  const allowedPick = new Set(['@_publicID', 'time', 'waveformID', 'filterID', 'methodID', 'horizontalSlowness', 'backazimuth', 'slownessMethodID', 'onset', 'phaseHint', 'polarity', 'evaluationMode', 'evaluationStatus', 'comment', 'creationInfo']);
  const statuses = ['preliminary', 'confirmed', 'reviewed', 'final', 'rejected'];
  for (const e of asArray(ep.event).map(obj)) {
    for (const k of Object.keys(e)) if (!allowedEvent.has(k)) problems.push(`event: unknown element ${k}`);
    if (!String(e['@_publicID']).startsWith('smi:')) problems.push('event publicID');
    if (typeof e.type !== 'string') problems.push('event type');
    if (!['known', 'suspected'].includes(String(e.typeCertainty))) problems.push('event typeCertainty');
    for (const c of asArray(e.comment).map(obj)) if (c.text === undefined) problems.push('comment text');
    for (const p of asArray(e.pick).map(obj)) {
      for (const k of Object.keys(p)) if (!allowedPick.has(k)) problems.push(`pick: unknown element ${k}`);
      if (!String(p['@_publicID']).startsWith('smi:')) problems.push('pick publicID');
      if (typeof obj(p.time).value !== 'string') problems.push('pick time value');
      const w = obj(p.waveformID);
      if (typeof w['@_networkCode'] !== 'string' || typeof w['@_stationCode'] !== 'string') problems.push('pick waveformID codes');
      if (!['impulsive', 'emergent', 'questionable'].includes(String(p.onset))) problems.push('pick onset');
      if (!['positive', 'negative', 'undecidable'].includes(String(p.polarity))) problems.push('pick polarity');
      if (!['manual', 'automatic'].includes(String(p.evaluationMode))) problems.push('pick evaluationMode');
      if (!statuses.includes(String(p.evaluationStatus))) problems.push('pick evaluationStatus');
    }
  }
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
    expect(out).toBe('http://quakeml.org/xmlns/quakeml/1.2 2');
  });

  it('passes the structural check of QuakeML 1.2 element names', () => {
    expect(checkQuakemlStructure(parser.parse(xml) as Node)).toEqual([]);
  });

  it('parses back to the events, types, statuses and picks that went in', () => {
    const doc = obj(parser.parse(xml) as Node);
    const ev = asArray(obj(obj(doc['q:quakeml']).eventParameters).event).map(obj);
    expect(ev.map((e) => e['@_publicID'])).toEqual(['smi:seisift.local/event/candidate/3', 'smi:seisift.local/event/item/20']);
    expect(ev.map((e) => e.type)).toEqual(['earthquake', 'quarry blast']);
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

  it('says there is no origin or magnitude, and uses the authority given', () => {
    expect(xml).toMatch(/does not locate events or compute magnitudes/);
    expect(xml).not.toMatch(/<origin|<magnitude/);
    expect(buildQuakeml(events, { ...opts, authority: 'xx.example/seisift' })).toMatch(/smi:xx\.example\/seisift\/event\/item\/20/);
    expect(() => buildQuakeml(events, { ...opts, authority: 'bad authority' })).toThrow(/authority/);
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
    expect(rows).toHaveLength(3);
    expect(rows[1]?.[0]).toBe('smi:seisift.local/event/candidate/3');
    expect(rows[1]?.[3]).toBe('earthquake');
    expect(rows[1]?.[8]).toBe('P@XX.KV01.00.HHZ@2026-03-14T09:26:53.589123Z;S@XX.KV02..HHN@2026-03-14T09:26:57.100Z');
    expect(rows[1]?.[12]).toBe('felt <nearby> & "clear", on KV01\nsecond line');
    expect(rows[2]?.[7]).toBe('0');
  });

  it('defuses spreadsheet formulas', () => {
    expect(csvField('=1+2')).toBe("'=1+2");
    expect(csvField('a,b')).toBe('"a,b"');
  });
});
