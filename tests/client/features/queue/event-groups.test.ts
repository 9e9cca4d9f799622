import { describe, expect, it } from 'vitest';
import { collapseEventGroups } from '@client/features/queue/lib/event-groups';

const row = (id: number, g: number | null) => ({ id, candidateEvent: g === null ? null : { id: g, stationCount: 3 } });

describe('queue event groups', () => {
  const rows = [row(1, null), row(2, 7), row(3, null), row(4, 7), row(5, 8), row(6, 7)];

  it('shows one row per group, where its first member sits, with the count of its loaded members', () => {
    const g = collapseEventGroups(rows, new Set());
    expect(g.map((x) => [x.row.id, x.role, x.membersHere])).toEqual([
      [1, 'item', 0],
      [2, 'group', 3],
      [3, 'item', 0],
      [5, 'group', 1],
    ]);
  });

  it('puts an expanded group’s other members right beneath its row', () => {
    const g = collapseEventGroups(rows, new Set([7]));
    expect(g.map((x) => [x.row.id, x.role])).toEqual([
      [1, 'item'],
      [2, 'group'],
      [4, 'member'],
      [6, 'member'],
      [3, 'item'],
      [5, 'group'],
    ]);
  });
});
