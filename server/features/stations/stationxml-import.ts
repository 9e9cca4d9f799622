import { createHash } from 'node:crypto';
import { and, eq } from 'drizzle-orm';
import { z } from 'zod';
import { can, stationScope, type PolicyActor } from '@shared/auth/policies';
import { capMessage } from '@shared/quote-input';
import { channelCodeSchema, locationCodeSchema, networkCodeSchema, profileNyquistIssues, stationCodeSchema } from '@shared/schemas/station';
import { processingProfileSchema } from '@shared/schemas/processing-profile';
import type { Database } from '@server/db/client';
import { channels, stationAssignments, stations } from '@server/db/schema/stations';
import type { PolesZerosResponse } from '@server/dsp/response';
import { conflict, forbidden, unprocessable } from '@server/errors';
import { parseStationXml, StationXmlParseError, type PolesZeros, type StationXmlChannel } from '@server/formats/stationxml';
import { withRegistryStages } from '@server/seismo/instrument-response';
import { storedProfile, writeAudit, type Actor } from './station-registry';

/**
 * StationXML import: a preview of what a document would change in the registry (new, changed,
 * unchanged stations and channels, with field diffs), then an apply that writes exactly that
 * preview in one transaction with one audit row.
 *
 * Rules:
 * - Per station and per channel (location + code) the CURRENT epoch is used: the one without an
 *   end date or ending in the future, the latest start first. Channels whose every epoch has ended
 *   are reported as `skipped` and not imported.
 * - Station fields: name (Site/Name), latitude, longitude, elevation. Channel fields: sample rate,
 *   InstrumentSensitivity (value, frequency, input units) and the first PolesZeros stage as a
 *   rad/s response. A `LAPLACE (HERTZ)` stage is converted: s = 2π·f, so poles and zeros are
 *   multiplied by 2π and A0 by (2π)^(poles − zeros) (SEED manual 2.4, blockette 53 notes). A
 *   digital (Z-transform) stage is not used as a response.
 * - Channels present in the registry but not in the document are left as they are.
 * - Codes are checked with the registry's rules (shared/schemas/station.ts); a station or channel
 *   with an invalid code, or a channel whose sample rate the station's profile cannot use, is
 *   `invalid` and not applied.
 */

/** One changed field. */
export interface FieldDiff {
  field: string;
  from: unknown;
  to: unknown;
}

/** The preview of one channel. */
export interface ChannelPreview {
  streamId: string;
  status: 'new' | 'changed' | 'unchanged' | 'skipped' | 'invalid';
  fields: FieldDiff[];
  message?: string;
}

/** The preview of one station. */
export interface StationPreview {
  station: string;
  stationId: number | null;
  /**
   * `refused`: a station the requester may not see (someone else's, or unregistered for one who
   * may not register): nothing of it is shown, and applying leaves it out.
   */
  status: 'new' | 'changed' | 'unchanged' | 'invalid' | 'refused';
  fields: FieldDiff[];
  channels: ChannelPreview[];
  message?: string;
  /** Whether the requesting user may apply this station's changes. */
  allowed: boolean;
}

/** The preview of a whole document. */
export interface ImportPreview {
  /** Hash of the preview; apply must present it, so it writes what was shown. */
  previewHash: string;
  stations: StationPreview[];
  counts: { newStations: number; changedStations: number; unchangedStations: number; newChannels: number; changedChannels: number; invalid: number };
}

interface ChannelValues {
  sampleRateHz: number;
  sensitivity: number | null;
  sensitivityFrequencyHz: number | null;
  sensitivityInputUnits: string | null;
  response: PolesZerosResponse | null;
}

interface Planned {
  key: string;
  network: string;
  code: string;
  values: { name: string; latitude: number; longitude: number; elevationM: number };
  channels: Array<{ location: string; code: string; streamId: string; values: ChannelValues }>;
}

/**
 * The rad/s response of a PolesZeros stage with the channel's overall sensitivity, or null when
 * the stage is digital or there is no sensitivity.
 */
export function responseFromStationXml(paz: PolesZeros | undefined, sensitivity: { value: number; frequencyHz: number } | undefined): PolesZerosResponse | null {
  if (!paz || !sensitivity || !(sensitivity.value > 0)) return null;
  if (paz.transferFunctionType === 'DIGITAL (Z-TRANSFORM)') return null;
  const k = paz.transferFunctionType === 'LAPLACE (HERTZ)' ? 2 * Math.PI : 1;
  return {
    zeros: paz.zeros.map((z) => ({ re: z.re * k, im: z.im * k })),
    poles: paz.poles.map((p) => ({ re: p.re * k, im: p.im * k })),
    normalizationFactor: paz.normalizationFactor * Math.pow(k, paz.poles.length - paz.zeros.length),
    sensitivity: sensitivity.value,
    sensitivityFrequencyHz: sensitivity.frequencyHz,
  };
}

function currentEpoch<T extends { startTimeUs?: number | undefined; endTimeUs?: number | undefined }>(epochs: T[], nowUs: number): T | null {
  const open = epochs.filter((e) => e.endTimeUs === undefined || e.endTimeUs > nowUs);
  if (open.length === 0) return null;
  return open.reduce((a, b) => ((b.startTimeUs ?? 0) > (a.startTimeUs ?? 0) ? b : a));
}

const sameNumber = (a: number | null, b: number | null) => (a === null || b === null ? a === b : Math.abs(a - b) <= 1e-9 * Math.max(1, Math.abs(a), Math.abs(b)));
const sameJson = (a: unknown, b: unknown) => JSON.stringify(a ?? null) === JSON.stringify(b ?? null);

function diffValues(from: Record<string, unknown> | null, to: Record<string, unknown>): FieldDiff[] {
  const out: FieldDiff[] = [];
  for (const [field, value] of Object.entries(to)) {
    const old = from ? from[field] ?? null : null;
    const same = typeof value === 'number' || value === null ? (typeof old === 'number' || old === null ? sameNumber(old, value) : false) : sameJson(old, value);
    if (!same) out.push({ field, from: from ? old : null, to: value });
  }
  return out;
}

/**
 * Parses the document and compares it with the registry. A station the actor may not view
 * (`station.view`) is answered `refused` with nothing of what is stored, and so is an unregistered
 * one for an actor limited to assigned stations, so the two cannot be told apart.
 * @param actor the requesting user's roles and stations (for the scope and `allowed`), or null for all
 * @throws 422 naming the XML problem (StationXmlParseError's message)
 */
export async function previewStationXml(db: Database, xml: string, actor: PolicyActor | null, now = new Date()): Promise<{ preview: ImportPreview; plan: Planned[] }> {
  let doc;
  try {
    doc = parseStationXml(xml);
  } catch (err) {
    if (err instanceof StationXmlParseError) throw unprocessable(capMessage(err.message));
    throw err;
  }
  const nowUs = now.getTime() * 1000;
  const viewScope = actor === null ? 'all' : stationScope(actor, 'station.view');
  const previews: StationPreview[] = [];
  const plan: Planned[] = [];
  const byKey = new Map<string, { net: string; epochs: (typeof doc.networks)[number]['stations'] }>();
  for (const net of doc.networks) {
    for (const st of net.stations) {
      const key = `${net.code}.${st.code}`;
      const entry = byKey.get(key) ?? { net: net.code, epochs: [] };
      entry.epochs.push(st);
      byKey.set(key, entry);
    }
  }
  for (const [key, { net, epochs }] of byKey) {
    const netCode = networkCodeSchema.safeParse(net);
    const staCode = stationCodeSchema.safeParse(epochs[0]?.code ?? '');
    if (!netCode.success || !staCode.success) {
      const msg = [netCode.error?.issues[0]?.message, staCode.error?.issues[0]?.message].filter(Boolean).join('; ');
      previews.push({ station: key, stationId: null, status: 'invalid', fields: [], channels: [], message: msg, allowed: false });
      continue;
    }
    const st = currentEpoch(epochs, nowUs);
    if (!st) {
      previews.push({ station: key, stationId: null, status: 'invalid', fields: [], channels: [], message: 'every epoch of this station has ended', allowed: false });
      continue;
    }
    const network = netCode.data;
    const code = staCode.data;
    const [row] = await db.select().from(stations).where(and(eq(stations.network, network), eq(stations.code, code)));
    // Nothing stored for a station the requester may not view leaves the server, nor whether it
    // is registered at all: someone else's station and an unregistered one look the same.
    if (viewScope !== 'all' && !(row && viewScope !== 'none' && viewScope.includes(row.id))) {
      previews.push({ station: key, stationId: null, status: 'refused', fields: [], channels: [], message: 'not one of your stations (or not registered): left out of this import', allowed: false });
      continue;
    }
    const values = { name: st.siteName.slice(0, 200) || key, latitude: st.latitude, longitude: st.longitude, elevationM: st.elevationM };
    const fields = diffValues(row ? { name: row.name, latitude: row.latitude, longitude: row.longitude, elevationM: row.elevationM } : null, values);
    const existingChannels = row ? await db.select().from(channels).where(eq(channels.stationId, row.id)) : [];
    const profile = row ? storedProfile(row) : processingProfileSchema.parse({});
    const chPreviews: ChannelPreview[] = [];
    const chPlan: Planned['channels'] = [];
    const chByKey = new Map<string, StationXmlChannel[]>();
    for (const ch of st.channels) {
      const k = `${ch.locationCode}.${ch.code}`;
      chByKey.set(k, [...(chByKey.get(k) ?? []), ch]);
    }
    for (const [k, chEpochs] of chByKey) {
      const streamId = `${network}.${code}.${k}`;
      const first = chEpochs[0] as StationXmlChannel;
      const loc = locationCodeSchema.safeParse(first.locationCode);
      const cha = channelCodeSchema.safeParse(first.code);
      if (!loc.success || !cha.success) {
        chPreviews.push({ streamId, status: 'invalid', fields: [], message: [loc.error?.issues[0]?.message, cha.error?.issues[0]?.message].filter(Boolean).join('; ') });
        continue;
      }
      const ch = currentEpoch(chEpochs, nowUs);
      if (!ch) {
        chPreviews.push({ streamId, status: 'skipped', fields: [], message: 'every epoch of this channel has ended' });
        continue;
      }
      if (!(ch.sampleRateHz !== undefined && ch.sampleRateHz > 0)) {
        chPreviews.push({ streamId, status: 'invalid', fields: [], message: '<SampleRate> is missing or 0' });
        continue;
      }
      const issues = profileNyquistIssues(profile, [{ streamId, sampleRateHz: ch.sampleRateHz }]);
      if (issues.length > 0) {
        chPreviews.push({ streamId, status: 'invalid', fields: [], message: `the station's profile field ${issues[0]?.path} ${issues[0]?.message}` });
        continue;
      }
      const chValues: ChannelValues = {
        sampleRateHz: ch.sampleRateHz,
        sensitivity: ch.sensitivity?.value ?? null,
        sensitivityFrequencyHz: ch.sensitivity?.frequencyHz ?? null,
        sensitivityInputUnits: ch.sensitivity?.inputUnits.slice(0, 40) ?? null,
        // Every stage beside the first poles and zeros: ML reads the full response (seismo/instrument-response.ts).
        response: withRegistryStages(responseFromStationXml(ch.paz, ch.sensitivity), ch.stages),
      };
      const old = existingChannels.find((e) => e.location === loc.data && e.code === cha.data);
      const chFields = diffValues(
        old
          ? { sampleRateHz: old.sampleRateHz, sensitivity: old.sensitivity, sensitivityFrequencyHz: old.sensitivityFrequencyHz, sensitivityInputUnits: old.sensitivityInputUnits, response: old.response }
          : null,
        { ...chValues },
      );
      const status = !old ? 'new' : chFields.length > 0 ? 'changed' : 'unchanged';
      chPreviews.push({ streamId, status, fields: chFields.map((f) => (f.field === 'response' ? { field: 'response', from: f.from ? 'poles and zeros' : null, to: f.to ? 'poles and zeros' : null } : f)) });
      if (status !== 'unchanged') chPlan.push({ location: loc.data, code: cha.data, streamId, values: chValues });
    }
    const status = !row ? 'new' : fields.length > 0 || chPlan.length > 0 ? 'changed' : 'unchanged';
    const allowed = actor === null ? true : status === 'unchanged' ? true : row ? can(actor, 'station.edit', { stationId: row.id }) : can(actor, 'station.create');
    previews.push({ station: key, stationId: row?.id ?? null, status, fields, channels: chPreviews, allowed });
    if (status !== 'unchanged') plan.push({ key, network, code, values, channels: chPlan });
  }
  previews.sort((a, b) => a.station.localeCompare(b.station));
  const counts = {
    newStations: previews.filter((p) => p.status === 'new').length,
    changedStations: previews.filter((p) => p.status === 'changed').length,
    unchangedStations: previews.filter((p) => p.status === 'unchanged').length,
    newChannels: previews.flatMap((p) => p.channels).filter((c) => c.status === 'new').length,
    changedChannels: previews.flatMap((p) => p.channels).filter((c) => c.status === 'changed').length,
    invalid: previews.filter((p) => p.status === 'invalid').length + previews.flatMap((p) => p.channels).filter((c) => c.status === 'invalid').length,
  };
  const previewHash = createHash('sha256').update(JSON.stringify(plan)).digest('hex');
  return { preview: { previewHash, stations: previews, counts }, plan };
}

/** Body fields of the apply request besides the file. */
export const importApplySchema = z.object({ previewHash: z.string().regex(/^[0-9a-f]{64}$/, 'previewHash must be the 64-character hash from the preview') });

/**
 * Applies a previewed document: recomputes the preview, refuses (409) when it no longer matches
 * `previewHash` (the registry or the file changed), refuses (403) when the user may not change
 * one of the stations they can see, then writes every new/changed station and channel in one
 * transaction with one audit row. Stations `refused` in the preview (not the user's to see) are
 * left out, as the preview said: an operator may apply the network's whole document and change
 * only their own stations. An operator who registers a station through the import is assigned to it.
 * @returns the preview that was applied
 */
export async function applyStationXml(db: Database, xml: string, previewHash: string, actor: PolicyActor & { isOperator: boolean }, who: Actor, now = new Date()): Promise<ImportPreview> {
  const { preview, plan } = await previewStationXml(db, xml, actor, now);
  if (preview.previewHash !== previewHash) throw conflict('The registry or the file changed since the preview: preview the file again');
  const refused = preview.stations.filter((s) => !s.allowed && s.status !== 'refused');
  if (refused.length > 0) throw forbidden(`You may not change ${refused.map((s) => s.station).join(', ')}`);
  if (plan.length === 0) return preview;
  await db.transaction(async (tx) => {
    const t = new Date();
    for (const p of plan) {
      const [row] = await tx.select().from(stations).where(and(eq(stations.network, p.network), eq(stations.code, p.code)));
      let stationId: number;
      if (row) {
        stationId = row.id;
        await tx.update(stations).set({ ...p.values, updatedAt: t }).where(eq(stations.id, row.id));
      } else {
        const [res] = await tx
          .insert(stations)
          .values({ network: p.network, code: p.code, ...p.values, siteDescription: null, profile: processingProfileSchema.parse({}), createdAt: t, updatedAt: t })
          .$returningId();
        if (!res) throw new Error('insert returned no id');
        stationId = res.id;
        if (actor.isOperator && who.userId) await tx.insert(stationAssignments).values({ userId: who.userId, stationId });
      }
      for (const c of p.channels) {
        const [old] = await tx.select({ id: channels.id }).from(channels).where(and(eq(channels.stationId, stationId), eq(channels.location, c.location), eq(channels.code, c.code)));
        if (old) await tx.update(channels).set({ ...c.values, updatedAt: t }).where(eq(channels.id, old.id));
        else await tx.insert(channels).values({ stationId, location: c.location, code: c.code, ...c.values, createdAt: t, updatedAt: t });
      }
    }
    await writeAudit(tx, who, 'stationxml.import', { type: 'stationxml', id: previewHash.slice(0, 16) }, {
      counts: preview.counts,
      stations: preview.stations.filter((s) => s.status !== 'unchanged').map((s) => ({ station: s.station, status: s.status, fields: s.fields.map((f) => f.field), channels: s.channels.filter((c) => c.status === 'new' || c.status === 'changed').map((c) => `${c.streamId} ${c.status}`) })),
    });
  });
  return preview;
}
