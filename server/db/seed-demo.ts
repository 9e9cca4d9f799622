import { and, eq } from 'drizzle-orm';
import { randomBytes } from 'node:crypto';
import type { Role } from '@shared/auth/roles';
import { processingProfileSchema } from '@shared/schemas/processing-profile';
import { hashPassword } from '@server/auth/password';
import type { Database } from './client';
import { channels, stationAssignments, stations } from './schema/stations';
import { userRoles, users } from './schema/users';

/** The invented Kestrel Valley network (demo only; every name and place is made up). */
export const demoStations = [
  { code: 'KV01', name: 'Kestrel Valley north ridge', latitude: 46.3121, longitude: 11.0412, elevationM: 1240, site: 'Vault on bedrock above the valley, quiet site' },
  { code: 'KV02', name: 'Kestrel Valley quarry rim', latitude: 46.2764, longitude: 11.0957, elevationM: 880, site: 'Shallow vault 1.5 km from the quarry face' },
  { code: 'KV03', name: 'Kestrel Valley highway bridge', latitude: 46.2518, longitude: 11.0633, elevationM: 540, site: 'Posthole sensor 300 m from the valley highway' },
  { code: 'KV04', name: 'Kestrel Valley pumping station', latitude: 46.2302, longitude: 11.1215, elevationM: 515, site: 'Basement of the pumping station; 25 Hz pump line' },
  { code: 'KV05', name: 'Kestrel Valley south saddle', latitude: 46.1987, longitude: 11.0781, elevationM: 1105, site: 'Wind-exposed saddle, gusty afternoons' },
  { code: 'KV06', name: 'Kestrel Valley east forest', latitude: 46.2649, longitude: 11.1693, elevationM: 960, site: 'Forest road vault; an older digitiser that glitches' },
] as const;

/** Demo users, one per role, with the e-mail addresses the README lists. */
export const demoUsers: { email: string; displayName: string; roles: Role[]; stations?: string[] }[] = [
  { email: 'operator@kestrel.example', displayName: 'Demo Operator', roles: ['operator'], stations: ['KV01', 'KV02', 'KV03'] },
  { email: 'analyst@kestrel.example', displayName: 'Demo Analyst', roles: ['analyst'] },
  { email: 'supervisor@kestrel.example', displayName: 'Demo Supervisor', roles: ['supervisor'] },
  { email: 'admin@kestrel.example', displayName: 'Demo Admin', roles: ['admin'] },
];

/** Network code of the demo (XX is the FDSN code for temporary/test data). */
export const demoNetwork = 'XX';

/**
 * Seeds the demo stations (three 100 sps HH channels each) and the demo users, idempotently: rows
 * that exist are left exactly as they are, so a second run changes nothing and loses nothing.
 */
export async function seedDemo(db: Database, opts: { demoPassword: string }): Promise<{ created: string[] }> {
  const created: string[] = [];
  const now = new Date();
  const stationIds = new Map<string, number>();
  for (const s of demoStations) {
    const existing = await db.select({ id: stations.id }).from(stations).where(and(eq(stations.network, demoNetwork), eq(stations.code, s.code)));
    let id = existing[0]?.id;
    if (id === undefined) {
      const [res] = await db.insert(stations).values({
        network: demoNetwork,
        code: s.code,
        name: s.name,
        latitude: s.latitude,
        longitude: s.longitude,
        elevationM: s.elevationM,
        siteDescription: s.site,
        // KV04 sits in the pumping station: a band-reject around the pump's 25 Hz line.
        ...(s.code === 'KV04' ? { profile: processingProfileSchema.parse({ bandReject: [{ fmin: 24.5, fmax: 25.5, order: 4, label: 'pump, 25 Hz' }] }) } : {}),
        createdAt: now,
        updatedAt: now,
      });
      id = res.insertId;
      created.push(`station ${demoNetwork}.${s.code}`);
      for (const code of ['HHZ', 'HHN', 'HHE']) {
        await db.insert(channels).values({
          stationId: id,
          location: '00',
          code,
          sampleRateHz: 100,
          // A common broadband sensor/digitiser pair gives about 1.5e9 counts per m/s (demo value).
          sensitivity: 1.5e9,
          sensitivityFrequencyHz: 1,
          sensitivityInputUnits: 'm/s',
          createdAt: now,
          updatedAt: now,
        });
      }
    }
    stationIds.set(s.code, id);
  }

  for (const u of demoUsers) {
    const existing = await db.select({ id: users.id }).from(users).where(eq(users.email, u.email));
    if (existing[0]) continue;
    const id = randomBytes(15).toString('base64url');
    await db.transaction(async (tx) => {
      await tx.insert(users).values({ id, email: u.email, displayName: u.displayName, passwordHash: await hashPassword(opts.demoPassword), active: true, createdAt: now, updatedAt: now });
      await tx.insert(userRoles).values(u.roles.map((role) => ({ userId: id, role })));
      const assigned = (u.stations ?? []).map((code) => stationIds.get(code)).filter((x): x is number => x !== undefined);
      if (assigned.length) await tx.insert(stationAssignments).values(assigned.map((stationId) => ({ userId: id, stationId })));
    });
    created.push(`user ${u.email}`);
  }
  return { created };
}
