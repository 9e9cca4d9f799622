import { XMLParser, XMLValidator } from 'fast-xml-parser';
import { z } from 'zod';
import { parseIsoTimeUs } from './iso-time';
import { clipInput, quoteInput } from '@shared/quote-input';

/** The error parseStationXml throws: names the element path and what is wrong. */
export class StationXmlParseError extends Error {
  override readonly name = 'StationXmlParseError';
}

const complexSchema = z.object({ re: z.number(), im: z.number() });

/** Transfer function types of a PolesZeros stage (FDSN StationXML 1.2). */
export const PZ_TRANSFER_FUNCTION_TYPES = ['LAPLACE (RADIANS/SECOND)', 'LAPLACE (HERTZ)', 'DIGITAL (Z-TRANSFORM)'] as const;

/** Overall sensitivity of a channel (StationXML InstrumentSensitivity). */
export const sensitivitySchema = z.object({
  /** Gain, output units per input unit (e.g. counts per m/s). */
  value: z.number(),
  /** Frequency at which `value` holds, Hz. */
  frequencyHz: z.number().nonnegative(),
  inputUnits: z.string(),
  outputUnits: z.string(),
});

/** The poles-and-zeros stage (StationXML PolesZeros; SEED blockette 53 conventions). */
export const pazSchema = z.object({
  /** Stage number of this PolesZeros in the Response. */
  stage: z.number().int(),
  transferFunctionType: z.enum(PZ_TRANSFER_FUNCTION_TYPES),
  /** A0: makes |A0 · Π(s − z) / Π(s − p)| = 1 at the normalization frequency. */
  normalizationFactor: z.number(),
  normalizationFrequencyHz: z.number().nonnegative(),
  /** Zeros, in rad/s for LAPLACE (RADIANS/SECOND), Hz for LAPLACE (HERTZ). */
  zeros: z.array(complexSchema),
  poles: z.array(complexSchema),
  inputUnits: z.string(),
  outputUnits: z.string(),
  /** The stage's gain, when given. */
  stageGain: z.object({ value: z.number(), frequencyHz: z.number() }).optional(),
});

/** What a response stage holds (the FDSN StationXML 1.2 stage elements; `Gain` for a stage with only a StageGain). */
export const STAGE_KINDS = ['PolesZeros', 'Coefficients', 'FIR', 'ResponseList', 'Polynomial', 'Gain'] as const;

/** One stage of a channel's Response, in the order of the document. */
export const responseStageSchema = z.object({
  /** The stage's `number` attribute. */
  number: z.number().int(),
  kind: z.enum(STAGE_KINDS),
  inputUnits: z.string().optional(),
  outputUnits: z.string().optional(),
  /** The stage's poles and zeros (kind PolesZeros). */
  paz: pazSchema.optional(),
  /** Digital filter coefficients: numerator count, denominator count (Coefficients), or FIR taps. */
  coefficientCounts: z.object({ numerator: z.number().int(), denominator: z.number().int() }).optional(),
  /** CfTransferFunctionType of a Coefficients stage. */
  cfTransferFunctionType: z.string().optional(),
  /** The stage's gain, when given. */
  gain: z.object({ value: z.number(), frequencyHz: z.number() }).optional(),
  /** Decimation of a digital stage. */
  decimation: z.object({ inputSampleRateHz: z.number(), factor: z.number().int() }).optional(),
});

/** One channel epoch. */
export const channelSchema = z.object({
  /** Stream id NET.STA.LOC.CHA. */
  id: z.string(),
  code: z.string(),
  locationCode: z.string(),
  startDate: z.string().optional(),
  endDate: z.string().optional(),
  /** µs since epoch, from startDate/endDate. */
  startTimeUs: z.number().optional(),
  endTimeUs: z.number().optional(),
  latitude: z.number().min(-90).max(90),
  longitude: z.number().min(-180).max(180),
  elevationM: z.number(),
  depthM: z.number(),
  /** Degrees clockwise from north. */
  azimuthDeg: z.number().min(0).max(360).optional(),
  /** Degrees down from horizontal (−90 = up, the usual vertical). */
  dipDeg: z.number().min(-90).max(90).optional(),
  sampleRateHz: z.number().nonnegative().optional(),
  sensitivity: sensitivitySchema.optional(),
  paz: pazSchema.optional(),
  /** Every stage of the Response in document order (empty when the channel has no stages). */
  stages: z.array(responseStageSchema).default([]),
});

/** One station epoch. */
export const stationSchema = z.object({
  code: z.string(),
  siteName: z.string(),
  latitude: z.number().min(-90).max(90),
  longitude: z.number().min(-180).max(180),
  elevationM: z.number(),
  startDate: z.string().optional(),
  endDate: z.string().optional(),
  startTimeUs: z.number().optional(),
  endTimeUs: z.number().optional(),
  channels: z.array(channelSchema),
});

/** One network. */
export const networkSchema = z.object({
  code: z.string(),
  description: z.string().optional(),
  startDate: z.string().optional(),
  endDate: z.string().optional(),
  stations: z.array(stationSchema),
});

/** A parsed StationXML document. */
export const stationXmlDocumentSchema = z.object({
  schemaVersion: z.string(),
  source: z.string().optional(),
  created: z.string().optional(),
  networks: z.array(networkSchema),
});

/** A parsed StationXML document (networks → stations → channels). */
export type StationXmlDocument = z.infer<typeof stationXmlDocumentSchema>;
/** A channel epoch of a StationXML document. */
export type StationXmlChannel = z.infer<typeof channelSchema>;
/** Poles and zeros of a channel. */
export type PolesZeros = z.infer<typeof pazSchema>;
/** One stage of a channel's Response. */
export type ResponseStage = z.infer<typeof responseStageSchema>;

const ARRAYS = new Set(['Network', 'Station', 'Channel', 'Stage', 'Zero', 'Pole', 'Numerator', 'Denominator', 'NumeratorCoefficient']);

/** A parsed XML element: children by name, attributes as `@_name`, text as `#text`. */
type Node = Record<string, unknown>;

const nodeSchema = z.record(z.string(), z.unknown());
const nodeListSchema = z.array(z.unknown());

/**
 * Parses FDSN StationXML 1.x (schema 1.0–1.2; element names as in the FDSN StationXML 1.2 schema)
 * for the station registry: networks → stations (code, site name, coordinates, epoch) → channels
 * (location, code, coordinates, depth, azimuth/dip, sample rate, InstrumentSensitivity, the
 * first PolesZeros stage of the Response with its StageGain as `paz`, and every stage as `stages`:
 * its kind, units, poles and zeros, coefficient counts, decimation and StageGain). Other elements
 * are ignored. Namespaces prefixes are dropped. Numbers must be finite decimals.
 *
 * @param xmlText the document text
 * @returns the document, validated against {@link stationXmlDocumentSchema}
 * @throws StationXmlParseError for malformed XML (with line and column), a root that is not
 *   FDSNStationXML, or a missing/invalid required element, naming its path
 *   (e.g. `Network XX / Station KV01 / Channel 00.HHZ: <Latitude> is missing`)
 */
export function parseStationXml(xmlText: string): StationXmlDocument {
  const valid = XMLValidator.validate(xmlText);
  if (valid !== true) {
    throw new StationXmlParseError(`StationXML is not well-formed XML: ${clipInput(valid.err.msg, 200)} (line ${valid.err.line}, column ${valid.err.col})`);
  }
  const parser = new XMLParser({
    ignoreAttributes: false,
    attributeNamePrefix: '@_',
    removeNSPrefix: true,
    parseTagValue: false,
    parseAttributeValue: false,
    trimValues: true,
    processEntities: true,
    isArray: (name) => ARRAYS.has(name),
  });
  let tree: unknown;
  try {
    tree = parser.parse(xmlText);
  } catch (err) {
    throw new StationXmlParseError(`StationXML could not be parsed: ${clipInput(err instanceof Error ? err.message : String(err), 200)}`);
  }
  const top = asNode(tree, 'document');
  const root = top.FDSNStationXML;
  if (root === undefined) {
    const names = Object.keys(top).filter((k) => !k.startsWith('?'));
    throw new StationXmlParseError(`not FDSN StationXML: the root element is <${clipInput(names[0] ?? 'none')}>, expected <FDSNStationXML>`);
  }
  const r = asNode(root, 'FDSNStationXML');
  const schemaVersion = attr(r, 'schemaVersion') ?? '';
  if (!/^1(\.\d+)?$/u.test(schemaVersion)) {
    throw new StationXmlParseError(`FDSNStationXML: schemaVersion ${quoteInput(schemaVersion)} is not a 1.x version`);
  }
  const networks = list(r, 'Network', 'FDSNStationXML').map((n) => parseNetwork(asNode(n, 'Network')));
  if (networks.length === 0) throw new StationXmlParseError('FDSNStationXML: no <Network> element');
  const doc = { schemaVersion, source: text(r.Source), created: text(r.Created), networks };
  const checked = stationXmlDocumentSchema.safeParse(doc);
  if (!checked.success) {
    const issue = checked.error.issues[0];
    throw new StationXmlParseError(`StationXML: ${issue?.path.join('.') ?? ''}: ${issue?.message ?? 'invalid value'}`);
  }
  return checked.data;
}

function parseNetwork(n: Node): z.infer<typeof networkSchema> {
  const code = requiredAttr(n, 'code', 'Network');
  const path = `Network ${clipInput(code)}`;
  return {
    code,
    description: text(n.Description),
    startDate: date(n, 'startDate', path),
    endDate: date(n, 'endDate', path),
    stations: list(n, 'Station', path).map((s) => parseStation(asNode(s, `${path} / Station`), code, path)),
  };
}

function parseStation(s: Node, network: string, parent: string): z.infer<typeof stationSchema> {
  const code = requiredAttr(s, 'code', `${parent} / Station`);
  const path = `${parent} / Station ${clipInput(code)}`;
  const site = s.Site === undefined ? undefined : asNode(s.Site, `${path} / Site`);
  const siteName = site ? text(site.Name) : undefined;
  if (siteName === undefined) throw new StationXmlParseError(`${path}: <Site><Name> is missing`);
  const startDate = date(s, 'startDate', path);
  const endDate = date(s, 'endDate', path);
  return {
    code,
    siteName,
    latitude: rangedNumber(s, 'Latitude', path, -90, 90),
    longitude: rangedNumber(s, 'Longitude', path, -180, 180),
    elevationM: requiredNumber(s, 'Elevation', path),
    startDate,
    endDate,
    startTimeUs: startDate === undefined ? undefined : parseIsoTimeUs(startDate),
    endTimeUs: endDate === undefined ? undefined : parseIsoTimeUs(endDate),
    channels: list(s, 'Channel', path).map((c) => parseChannel(asNode(c, `${path} / Channel`), network, code, path)),
  };
}

function parseChannel(c: Node, network: string, station: string, parent: string): StationXmlChannel {
  const code = requiredAttr(c, 'code', `${parent} / Channel`);
  const locationCode = attr(c, 'locationCode');
  if (locationCode === undefined) throw new StationXmlParseError(`${parent} / Channel ${clipInput(code)}: attribute locationCode is missing`);
  const path = `${parent} / Channel ${clipInput(`${locationCode}.${code}`)}`;
  const startDate = date(c, 'startDate', path);
  const endDate = date(c, 'endDate', path);
  const channel: StationXmlChannel = {
    id: `${network}.${station}.${locationCode}.${code}`,
    code,
    locationCode,
    startDate,
    endDate,
    startTimeUs: startDate === undefined ? undefined : parseIsoTimeUs(startDate),
    endTimeUs: endDate === undefined ? undefined : parseIsoTimeUs(endDate),
    latitude: rangedNumber(c, 'Latitude', path, -90, 90),
    longitude: rangedNumber(c, 'Longitude', path, -180, 180),
    elevationM: requiredNumber(c, 'Elevation', path),
    depthM: requiredNumber(c, 'Depth', path),
    azimuthDeg: c.Azimuth === undefined ? undefined : rangedNumber(c, 'Azimuth', path, 0, 360),
    dipDeg: c.Dip === undefined ? undefined : rangedNumber(c, 'Dip', path, -90, 90),
    sampleRateHz: c.SampleRate === undefined ? undefined : rangedNumber(c, 'SampleRate', path, 0, Number.MAX_VALUE),
    stages: [],
  };
  if (c.Response !== undefined) {
    const resp = asNode(c.Response, `${path} / Response`);
    if (resp.InstrumentSensitivity !== undefined) {
      const sp = `${path} / Response / InstrumentSensitivity`;
      const s = asNode(resp.InstrumentSensitivity, sp);
      channel.sensitivity = {
        value: requiredNumber(s, 'Value', sp),
        frequencyHz: rangedNumber(s, 'Frequency', sp, 0, Number.MAX_VALUE),
        inputUnits: units(s, 'InputUnits', sp),
        outputUnits: units(s, 'OutputUnits', sp),
      };
    }
    const stages: ResponseStage[] = [];
    for (const st of list(resp, 'Stage', `${path} / Response`)) {
      const stage = asNode(st, `${path} / Response / Stage`);
      const number = attr(stage, 'number');
      const stp = `${path} / Response / Stage ${number ?? '?'}`;
      const parsed = parseStage(stage, Number(number ?? 0), stp);
      stages.push(parsed);
      if (channel.paz === undefined && parsed.paz !== undefined) channel.paz = parsed.paz;
    }
    channel.stages = stages;
  }
  return channel;
}

/** One Response stage: what kind it is, its units, its poles and zeros, coefficients, decimation and gain. */
function parseStage(stage: Node, stageNumber: number, path: string): ResponseStage {
  const number = Number.isInteger(stageNumber) ? stageNumber : 0;
  const out: ResponseStage = { number, kind: 'Gain' };
  const unitsOf = (n: Node, p: string): void => {
    if (n.InputUnits !== undefined) out.inputUnits = units(n, 'InputUnits', p);
    if (n.OutputUnits !== undefined) out.outputUnits = units(n, 'OutputUnits', p);
  };
  if (stage.PolesZeros !== undefined) {
    out.kind = 'PolesZeros';
    out.paz = parsePaz(asNode(stage.PolesZeros, `${path} / PolesZeros`), stage, number, `${path} / PolesZeros`);
    out.inputUnits = out.paz.inputUnits;
    out.outputUnits = out.paz.outputUnits;
  } else if (stage.Coefficients !== undefined) {
    const p = `${path} / Coefficients`;
    const c = asNode(stage.Coefficients, p);
    out.kind = 'Coefficients';
    unitsOf(c, p);
    out.cfTransferFunctionType = text(c.CfTransferFunctionType);
    out.coefficientCounts = { numerator: list(c, 'Numerator', p).length, denominator: list(c, 'Denominator', p).length };
  } else if (stage.FIR !== undefined) {
    const p = `${path} / FIR`;
    const f = asNode(stage.FIR, p);
    out.kind = 'FIR';
    unitsOf(f, p);
    out.coefficientCounts = { numerator: list(f, 'NumeratorCoefficient', p).length, denominator: 0 };
  } else if (stage.ResponseList !== undefined) {
    out.kind = 'ResponseList';
    unitsOf(asNode(stage.ResponseList, `${path} / ResponseList`), `${path} / ResponseList`);
  } else if (stage.Polynomial !== undefined) {
    out.kind = 'Polynomial';
    unitsOf(asNode(stage.Polynomial, `${path} / Polynomial`), `${path} / Polynomial`);
  }
  if (stage.Decimation !== undefined) {
    const p = `${path} / Decimation`;
    const d = asNode(stage.Decimation, p);
    out.decimation = { inputSampleRateHz: rangedNumber(d, 'InputSampleRate', p, 0, Number.MAX_VALUE), factor: Math.round(requiredNumber(d, 'Factor', p)) };
  }
  if (stage.StageGain !== undefined) {
    const p = `${path} / StageGain`;
    const g = asNode(stage.StageGain, p);
    out.gain = { value: requiredNumber(g, 'Value', p), frequencyHz: requiredNumber(g, 'Frequency', p) };
  }
  return out;
}

function parsePaz(pz: Node, stage: Node, stageNumber: number, path: string): PolesZeros {
  const type = text(pz.PzTransferFunctionType);
  if (type === undefined) throw new StationXmlParseError(`${path}: <PzTransferFunctionType> is missing`);
  const known = PZ_TRANSFER_FUNCTION_TYPES.find((t) => t === type.toUpperCase());
  if (known === undefined) {
    throw new StationXmlParseError(`${path}: <PzTransferFunctionType> ${quoteInput(type)} is not one of ${PZ_TRANSFER_FUNCTION_TYPES.join(', ')}`);
  }
  const complex = (name: 'Zero' | 'Pole'): { re: number; im: number }[] =>
    list(pz, name, path).map((raw, k) => {
      const node = asNode(raw, `${path} / ${name}`);
      const p = `${path} / ${name} ${attr(node, 'number') ?? k}`;
      return { re: requiredNumber(node, 'Real', p), im: requiredNumber(node, 'Imaginary', p) };
    });
  const paz: PolesZeros = {
    stage: Number.isInteger(stageNumber) ? stageNumber : 0,
    transferFunctionType: known,
    normalizationFactor: requiredNumber(pz, 'NormalizationFactor', path),
    normalizationFrequencyHz: rangedNumber(pz, 'NormalizationFrequency', path, 0, Number.MAX_VALUE),
    zeros: complex('Zero'),
    poles: complex('Pole'),
    inputUnits: units(pz, 'InputUnits', path),
    outputUnits: units(pz, 'OutputUnits', path),
  };
  if (stage.StageGain !== undefined) {
    const gp = `${path.replace(/ \/ PolesZeros$/u, '')} / StageGain`;
    const g = asNode(stage.StageGain, gp);
    paz.stageGain = { value: requiredNumber(g, 'Value', gp), frequencyHz: requiredNumber(g, 'Frequency', gp) };
  }
  return paz;
}

function asNode(v: unknown, path: string): Node {
  if (v === '' || v === undefined) return {};
  const r = nodeSchema.safeParse(v);
  if (!r.success || Array.isArray(v)) throw new StationXmlParseError(`${path}: expected child elements, found text or a repeated element`);
  return r.data;
}

function list(n: Node, name: string, path: string): unknown[] {
  const v = n[name];
  if (v === undefined) return [];
  const r = nodeListSchema.safeParse(v);
  if (!r.success) throw new StationXmlParseError(`${path}: <${name}> is malformed`);
  return r.data;
}

/** Text content of an element (plain string, or `#text` when the element has attributes). */
function text(v: unknown): string | undefined {
  if (typeof v === 'string') return v.trim() === '' ? undefined : v.trim();
  if (typeof v === 'number') return String(v);
  const node = nodeSchema.safeParse(v);
  if (node.success && !Array.isArray(v)) return text(node.data['#text']);
  return undefined;
}

function attr(n: Node, name: string): string | undefined {
  const v = n[`@_${name}`];
  return typeof v === 'string' ? v.trim() : undefined;
}

function requiredAttr(n: Node, name: string, path: string): string {
  const v = attr(n, name);
  if (v === undefined || v === '') throw new StationXmlParseError(`${path}: attribute ${name} is missing`);
  return v;
}

function date(n: Node, name: string, path: string): string | undefined {
  const v = attr(n, name);
  if (v === undefined) return undefined;
  if (parseIsoTimeUs(v) === undefined) throw new StationXmlParseError(`${path}: ${name} ${quoteInput(v)} is not an ISO-8601 date-time`);
  return v;
}

const DECIMAL = /^[+-]?(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?$/u;

function requiredNumber(n: Node, name: string, path: string): number {
  const raw = n[name];
  if (raw === undefined) throw new StationXmlParseError(`${path}: <${name}> is missing`);
  const t = text(raw);
  if (t === undefined || !DECIMAL.test(t) || !Number.isFinite(Number(t))) {
    throw new StationXmlParseError(`${path}: <${name}> ${quoteInput(t ?? '')} is not a finite number`);
  }
  return Number(t);
}

function rangedNumber(n: Node, name: string, path: string, min: number, max: number): number {
  const v = requiredNumber(n, name, path);
  if (v < min || v > max) throw new StationXmlParseError(`${path}: <${name}> ${v} is outside ${min}–${max}`);
  return v;
}

function units(n: Node, name: string, path: string): string {
  const u = n[name] === undefined ? undefined : text(asNode(n[name], `${path} / ${name}`).Name);
  if (u === undefined) throw new StationXmlParseError(`${path}: <${name}><Name> is missing`);
  return u;
}
