/**
 * The kind of a "why flagged" reason: its words with the figures and stream ids taken out, so
 * "STA/LTA peak 4.2 on XX.KV01.00.HHZ…" and "STA/LTA peak 7.9 on XX.KV03.00.HHZ…" are one kind
 * (the engine writes that reason for nearly every window) while "the trigger is no stronger than
 * this station's ordinary noise" is another.
 */
export function reasonKind(reason: string): string {
  return reason
    .replace(/\b[A-Z0-9]{1,2}\.[A-Z0-9]{1,5}\.[A-Z0-9-]{0,2}\.[A-Z0-9]{3}\b/g, '·id·')
    .replace(/[+−-]?\d+(?:[.,]\d+)?/g, '#')
    .replace(/\s+/g, ' ')
    .trim();
}

/**
 * Which of each row's reasons the queue's "why flagged" column shows: the one that tells this row
 * apart from the rows on screen, not the engine's first reason (almost always the same STA/LTA
 * sentence on every row).
 *
 * Rule: count, over all the rows given (the loaded list), in how many rows each reason kind
 * (`reasonKind`) occurs; for each row show the reason whose kind occurs in the fewest rows. Ties go
 * to the reason the engine wrote first (it writes the deciding evidence before the side notes), so a
 * row whose reasons are all shared still shows its strongest. With one row, or rows that all share
 * the same kinds, this falls back to the first reason.
 * @returns the index into each row's `reasons` to show, by row id (absent for rows without reasons)
 */
export function distinguishingReasons(rows: ReadonlyArray<{ id: number; reasons: readonly string[] }>): Map<number, number> {
  const rowsWithKind = new Map<string, number>();
  const kindsOf = rows.map((r) => r.reasons.map(reasonKind));
  for (const kinds of kindsOf) for (const k of new Set(kinds)) rowsWithKind.set(k, (rowsWithKind.get(k) ?? 0) + 1);
  const out = new Map<number, number>();
  rows.forEach((r, i) => {
    const kinds = kindsOf[i] ?? [];
    let best = -1;
    let bestCount = Infinity;
    kinds.forEach((k, j) => {
      const n = rowsWithKind.get(k) ?? 0;
      if (n < bestCount) {
        best = j;
        bestCount = n;
      }
    });
    if (best >= 0) out.set(r.id, best);
  });
  return out;
}
