/**
 * One channel order for every screen (station page table and spectra, review traces): per
 * location, each sensor's channels together (same band and instrument codes) with the vertical
 * first, then north, then east — Z, N, E (the numbered horizontals 1 and 2 take N's and E's
 * places) — and channels of any other component after them. The SEED convention names the
 * orientation in the channel code's last letter (SEED Manual v2.4, Appendix A); reading Z before the
 * horizontals is common practice.
 */

const componentRanks: Readonly<Record<string, number>> = { Z: 0, N: 1, '1': 1, E: 2, '2': 2 };

/**
 * Rank of a channel's component (the last character of a channel code or stream id): Z 0, N/1 1,
 * E/2 2, anything else 3.
 * @param channel a channel code ("HHZ") or a stream id ("XX.KV01.00.HHZ"); case-insensitive
 */
export function componentRank(channel: string): number {
  return componentRanks[channel.slice(-1).toUpperCase()] ?? 3;
}

/**
 * Compares two channel codes or stream ids for the one channel order: by network, station and
 * location (everything before the channel code); then the Z/N/E (1/2) channels before any other
 * component; then by sensor (band and instrument codes), so one sensor's channels stay together;
 * then Z, N, E; then by the code itself. For Array.prototype.sort.
 */
export function compareChannels(a: string, b: string): number {
  const cut = (id: string) => id.lastIndexOf('.') + 1;
  const placeA = a.slice(0, cut(a));
  const placeB = b.slice(0, cut(b));
  if (placeA !== placeB) return placeA < placeB ? -1 : 1;
  const otherA = componentRank(a) === 3 ? 1 : 0;
  const otherB = componentRank(b) === 3 ? 1 : 0;
  if (otherA !== otherB) return otherA - otherB;
  const sensorA = a.slice(0, -1);
  const sensorB = b.slice(0, -1);
  if (sensorA !== sensorB) return sensorA < sensorB ? -1 : 1;
  const byRank = componentRank(a) - componentRank(b);
  if (byRank !== 0) return byRank;
  return a < b ? -1 : a > b ? 1 : 0;
}

/**
 * A sorted copy of `items` in the one channel order (the input is not changed).
 * @param items channels in any order
 * @param idOf the stream id (or channel code) of an item
 */
export function sortChannels<T>(items: readonly T[], idOf: (item: T) => string): T[] {
  return [...items].sort((x, y) => compareChannels(idOf(x), idOf(y)));
}
