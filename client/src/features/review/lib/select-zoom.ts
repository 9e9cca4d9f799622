import type uPlot from 'uplot';

/**
 * A uPlot `setSelect` hook for the linked review plots: a drag wider than 4 px becomes a zoom to
 * that time range (s, clamped at 0), and the drawn selection is cleared at once (the plots then
 * redraw over the new range instead of keeping a grey box).
 */
export function selectToZoom(onZoom: (from: number, to: number) => void): (u: uPlot) => void {
  return (u) => {
    if (u.select.width > 4) {
      const from = u.posToVal(u.select.left, 'x');
      const to = u.posToVal(u.select.left + u.select.width, 'x');
      u.setSelect({ left: 0, top: 0, width: 0, height: 0 }, false);
      onZoom(Math.max(0, from), to);
    }
  };
}
