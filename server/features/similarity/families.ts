import { and, eq, gte, inArray } from 'drizzle-orm';
import { alias } from 'drizzle-orm/mysql-core';
import type { Family } from '@shared/schemas/similarity';
import type { Database } from '@server/db/client';
import { queueItems } from '@server/db/schema/queue-items';
import { stations } from '@server/db/schema/stations';
import { windowMatches } from '@server/db/schema/templates';

/** One window in the family graph. */
export interface FamilyNode {
  windowId: number;
  itemId: number;
  stationId: number;
  station: string;
  windowStart: Date;
  labelType: string | null;
  flag: string;
}

/** One link: two windows of a station whose match reached the threshold. */
export interface FamilyEdge {
  a: number;
  b: number;
  value: number;
}

/**
 * Families: the connected groups of windows linked by matches ≥ the threshold (single linkage, by
 * union–find with path halving), per station since a window only matches its own station's templates.
 * Each family has its label mix, its windows per hour of day (UTC: blasts cluster in working hours),
 * its time span and its strongest and weakest links. Families of fewer than `minSize`
 * windows are left out; the largest come first. Pure.
 */
export function groupFamilies(nodes: readonly FamilyNode[], edges: readonly FamilyEdge[], minSize = 2): Family[] {
  const parent = new Map<number, number>();
  const find = (x: number): number => {
    let r = x;
    while (parent.get(r) !== r) {
      const p = parent.get(r) as number;
      parent.set(r, parent.get(p) as number);
      r = p;
    }
    return r;
  };
  const byWindow = new Map(nodes.map((n) => [n.windowId, n]));
  for (const n of nodes) parent.set(n.windowId, n.windowId);
  const links: FamilyEdge[] = [];
  for (const e of edges) {
    if (!byWindow.has(e.a) || !byWindow.has(e.b)) continue;
    links.push(e);
    const ra = find(e.a);
    const rb = find(e.b);
    if (ra !== rb) parent.set(ra, rb);
  }
  const groups = new Map<number, FamilyNode[]>();
  for (const n of nodes) {
    const r = find(n.windowId);
    groups.set(r, [...(groups.get(r) ?? []), n]);
  }
  const linkValues = new Map<number, number[]>();
  for (const e of links) {
    const r = find(e.a);
    linkValues.set(r, [...(linkValues.get(r) ?? []), e.value]);
  }
  const out: Family[] = [];
  for (const [root, members] of groups) {
    if (members.length < minSize) continue;
    members.sort((x, y) => x.windowStart.getTime() - y.windowStart.getTime() || x.itemId - y.itemId);
    const first = members[0] as FamilyNode;
    const last = members[members.length - 1] as FamilyNode;
    const labelMix: Record<string, number> = {};
    const hours = Array.from({ length: 24 }, () => 0);
    for (const m of members) {
      const k = m.labelType ?? 'unlabelled';
      labelMix[k] = (labelMix[k] ?? 0) + 1;
      const h = m.windowStart.getUTCHours();
      hours[h] = (hours[h] ?? 0) + 1;
    }
    const values = linkValues.get(root) ?? [];
    out.push({
      id: first.itemId,
      stationId: first.stationId,
      station: first.station,
      size: members.length,
      labelMix,
      hours,
      firstAt: first.windowStart.toISOString(),
      lastAt: last.windowStart.toISOString(),
      bestLink: values.length ? Math.max(...values) : 0,
      weakestLink: values.length ? Math.min(...values) : 0,
      members: members.slice(0, 50).map((m) => ({ itemId: m.itemId, windowStart: m.windowStart.toISOString(), labelType: m.labelType, flag: m.flag })),
    });
  }
  return out.sort((x, y) => y.size - x.size || x.id - y.id);
}

/**
 * The families of the stations in `scope` (or of one station) from the stored matches ≥ `minValue`.
 */
export async function loadFamilies(db: Database, q: { station?: number | undefined; minValue: number; minSize: number }, scope: 'all' | readonly number[]): Promise<Family[]> {
  const where = [gte(windowMatches.value, q.minValue)];
  if (q.station !== undefined) where.push(eq(windowMatches.stationId, q.station));
  if (scope !== 'all') where.push(inArray(windowMatches.stationId, scope.length ? [...scope] : [-1]));
  const edgesRows = await db.select({ a: windowMatches.windowId, b: windowMatches.matchedWindowId, value: windowMatches.value }).from(windowMatches).where(and(...where));
  if (edgesRows.length === 0) return [];
  const ids = [...new Set(edgesRows.flatMap((e) => [e.a, e.b]))];
  const nodes: FamilyNode[] = [];
  const item = alias(queueItems, 'family_item');
  for (let i = 0; i < ids.length; i += 1000) {
    const rows = await db
      .select({ windowId: item.windowId, itemId: item.id, stationId: item.stationId, network: stations.network, code: stations.code, windowStart: item.windowStart, labelType: item.labelType, flag: item.flag })
      .from(item)
      .innerJoin(stations, eq(stations.id, item.stationId))
      .where(inArray(item.windowId, ids.slice(i, i + 1000)));
    for (const r of rows) nodes.push({ windowId: r.windowId, itemId: r.itemId, stationId: r.stationId, station: `${r.network}.${r.code}`, windowStart: r.windowStart, labelType: r.labelType, flag: r.flag });
  }
  return groupFamilies(nodes, edgesRows, q.minSize);
}
