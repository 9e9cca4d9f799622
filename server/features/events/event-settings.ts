import { eq } from 'drizzle-orm';
import { z } from 'zod';
import type { VelocityModelView } from '@shared/schemas/events';
import type { velocityModelBodySchema } from '@shared/schemas/events';
import type { DbOrTx } from '@server/db/client';
import { networkEventSettings } from '@server/db/schema/events';
import { badRequest, conflict } from '@server/errors';
import { recordChange } from '@server/realtime/change-log';
import { recordAudit } from '@server/features/audit/audit';
import { minusLogA0HuttonBoore, type MinusLogA0 } from '@server/seismo/magnitude';
import { DEFAULT_VELOCITY_MODEL, validateVelocityModel, type VelocityModel } from '@server/seismo/velocity-model';

/** The −log A0 laws a network may choose, by name (Hutton & Boore 1987 is the default). */
export const MINUS_LOG_A0_LAWS: Readonly<Record<string, MinusLogA0>> = { 'hutton-boore-1987': minusLogA0HuttonBoore };

/** What the event chain needs of a network's settings. */
export interface NetworkSettings {
  model: VelocityModel;
  minusLogA0Name: string;
  minusLogA0: MinusLogA0;
  stationCorrections: Record<string, number>;
  version: number | null;
  updatedAt: Date | null;
}

const layersSchema = z.array(z.object({ topKm: z.number(), vpKmS: z.number(), vsKmS: z.number() }));
const correctionsSchema = z.record(z.string(), z.number());

/** A network's settings, or Seisift's defaults (the placeholder model, Hutton & Boore, no corrections) when it has none. */
export async function networkSettings(db: DbOrTx, network: string): Promise<NetworkSettings> {
  const [row] = await db.select().from(networkEventSettings).where(eq(networkEventSettings.network, network));
  if (!row) return { model: DEFAULT_VELOCITY_MODEL, minusLogA0Name: 'hutton-boore-1987', minusLogA0: minusLogA0HuttonBoore, stationCorrections: {}, version: null, updatedAt: null };
  return {
    model: { name: row.modelName, layers: layersSchema.parse(row.layers), isDefault: false },
    minusLogA0Name: row.minusLogA0,
    minusLogA0: MINUS_LOG_A0_LAWS[row.minusLogA0] ?? minusLogA0HuttonBoore,
    stationCorrections: correctionsSchema.parse(row.stationCorrections),
    version: row.version,
    updatedAt: row.updatedAt,
  };
}

/** The API view of a network's settings. */
export function velocityModelView(network: string, s: NetworkSettings): VelocityModelView {
  const isDefault = s.model.isDefault === true;
  return {
    network,
    name: s.model.name,
    layers: s.model.layers.map((l) => ({ topKm: l.topKm, vpKmS: l.vpKmS, vsKmS: l.vsKmS })),
    isDefault,
    minusLogA0: s.minusLogA0Name,
    stationCorrections: s.stationCorrections,
    version: s.version,
    updatedAt: s.updatedAt?.toISOString() ?? null,
    note: isDefault
      ? "Seisift's default crust, a generic placeholder: a supervisor should replace it with the network's own model. Locations made with it say so."
      : 'Layers go down from the surface (depth positive down); the last layer is a half-space. Stations sit on the surface.',
  };
}

/**
 * Saves a network's model and ML station corrections (a supervisor's edit), checked by the engine's
 * rules (velocity-model.ts: first top at 0, tops increasing, 0 < Vs < Vp ≤ 20 km/s); optimistic
 * locking on `version`. Audited; a live update tells every event viewer.
 * @throws AppError 400 naming the layer and problem; 409 when the settings changed meanwhile
 */
export async function saveVelocityModel(
  db: DbOrTx,
  actor: { id: string; email: string },
  network: string,
  body: z.output<typeof velocityModelBodySchema>,
  ip: string | null,
): Promise<NetworkSettings> {
  const model: VelocityModel = { name: body.name, layers: body.layers };
  try {
    validateVelocityModel(model);
  } catch (err) {
    const message = err instanceof Error ? err.message : String(err);
    const layer = /layer (\d+)/u.exec(message);
    throw badRequest(`layers: ${message}`, { issues: [{ path: layer ? `layers.${Number(layer[1]) - 1}` : 'layers', message }] });
  }
  const [row] = await db.select().from(networkEventSettings).where(eq(networkEventSettings.network, network)).for('update');
  const now = new Date();
  let version: number;
  if (row) {
    if (body.version !== undefined && body.version !== row.version) throw conflict(`The ${network} model changed meanwhile (version ${row.version}, you read ${body.version}): reload it`);
    version = row.version + 1;
    await db
      .update(networkEventSettings)
      .set({ modelName: body.name, layers: body.layers, stationCorrections: body.stationCorrections, version, updatedByUserId: actor.id, updatedAt: now })
      .where(eq(networkEventSettings.network, network));
  } else {
    version = 1;
    await db.insert(networkEventSettings).values({ network, modelName: body.name, layers: body.layers, stationCorrections: body.stationCorrections, version, updatedByUserId: actor.id, updatedAt: now });
  }
  await recordAudit(db, { actor, action: 'events.velocity_model_saved', targetType: 'network', targetId: network, details: { name: body.name, layers: body.layers.length, version }, ip });
  await recordChange(db, { resource: 'velocity_model', resourceId: version, kind: row ? 'updated' : 'created', version, summary: { network }, audience: { action: 'event.view' } });
  return networkSettings(db, network);
}
