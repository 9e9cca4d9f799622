/** A queue row as the grouping needs it. */
export type GroupableRow = { id: number; candidateEvent: { id: number; stationCount: number } | null };

/** A row as the queue table shows it: a plain item, a group's leading row, or a member shown beneath it. */
export type GroupedRow<T extends GroupableRow> = { row: T; role: 'item' | 'group' | 'member'; membersHere: number };

/**
 * One row per candidate event: the group's first row in list order leads it (keeping the list's
 * order, so the group sits where its highest-ranked member would), the group's other loaded rows
 * follow right beneath it only when the group is in `expanded`. Rows of no group stay as they are.
 * `membersHere` is how many of the group's rows the loaded list holds (the group may span more).
 */
export function collapseEventGroups<T extends GroupableRow>(rows: readonly T[], expanded: ReadonlySet<number>): GroupedRow<T>[] {
  const byGroup = new Map<number, T[]>();
  for (const r of rows) {
    const g = r.candidateEvent?.id;
    if (g === undefined) continue;
    byGroup.set(g, [...(byGroup.get(g) ?? []), r]);
  }
  const out: GroupedRow<T>[] = [];
  const placed = new Set<number>();
  for (const r of rows) {
    const g = r.candidateEvent?.id;
    if (g === undefined) {
      out.push({ row: r, role: 'item', membersHere: 0 });
      continue;
    }
    if (placed.has(g)) continue;
    placed.add(g);
    const members = byGroup.get(g) ?? [r];
    out.push({ row: r, role: 'group', membersHere: members.length });
    if (expanded.has(g)) for (const m of members.slice(1)) out.push({ row: m, role: 'member', membersHere: members.length });
  }
  return out;
}
