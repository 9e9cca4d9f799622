import { Link, useLocation } from 'react-router';
import type { ItemMatch, ItemMatchesResponse } from '@shared/schemas/similarity';
import { Button } from '@client/components/ui/button';
import { paths } from '@client/config/paths';

/** How a label reads in the panel. */
const labelText = (t: string | null) => (t === null ? 'not labelled yet' : t === 'noise' ? 'dismissed as noise' : t);

/**
 * One match drawn as an overlay: this window's band-passed lead component (solid) and the matched
 * template (dashed), each scaled to a peak of 1, aligned at the match. Line style, not only colour,
 * tells them apart.
 */
function Overlay({ m }: { m: ItemMatch }) {
  const o = m.overlay;
  if (!o || o.times.length < 2) return <p className="text-xs text-ink-muted">No overlay: the template has been pruned.</p>;
  const w = 320;
  const h = 64;
  const t1 = o.times[o.times.length - 1] ?? 1;
  const path = (ys: number[]) => ys.map((y, i) => `${i === 0 ? 'M' : 'L'}${(((o.times[i] ?? 0) / t1) * w).toFixed(1)},${(h / 2 - (y * h) / 2.2).toFixed(1)}`).join(' ');
  return (
    <svg viewBox={`0 0 ${w} ${h}`} className="h-16 w-full" role="img" aria-label={`${o.channel}: this window (solid) and the match (dashed) from ${m.offsetS.toFixed(2)} s, over ${t1.toFixed(1)} s`}>
      <path d={path(o.window)} fill="none" stroke="var(--sf-plot-1)" strokeWidth="1" />
      <path d={path(o.template)} fill="none" stroke="var(--sf-plot-2)" strokeWidth="1" strokeDasharray="4 2" />
    </svg>
  );
}

/**
 * "Seen before": the item's best matches against its station's earlier windows, each overlaid on
 * this window's trace at the match, and the label the best labelled match suggests (key M takes it
 * into the form; the analyst still confirms).
 */
export function MatchesPanel({ data, loading, error, onTake, canTake }: { data: ItemMatchesResponse | undefined; loading: boolean; error: string | null; onTake: () => void; canTake: boolean }) {
  const location = useLocation();
  return (
    <section aria-label="Seen before" className="rounded-sm border border-line bg-surface p-3" data-testid="matches-panel">
      <h2 className="pb-1 text-md font-semibold">Seen before</h2>
      {loading ? (
        <p className="text-sm text-ink-muted">Looking for matches…</p>
      ) : error ? (
        <p className="text-sm">Matches could not be loaded: {error}</p>
      ) : !data || data.matches.length === 0 ? (
        <p className="text-sm text-ink-muted">No earlier window at this station resembles this one.</p>
      ) : (
        <>
          {data.suggestion ? (
            <div className="mb-2 flex flex-wrap items-center gap-2 text-sm" data-testid="match-suggestion">
              <span>
                Best labelled match {data.suggestion.value.toFixed(2)}:{' '}
                <strong>{data.suggestion.kind === 'event' ? data.suggestion.eventType : `noise (${data.suggestion.noiseReason})`}</strong>
              </span>
              <Button size="sm" shortcut="M" disabled={!canTake} onClick={onTake}>
                Take this label
              </Button>
            </div>
          ) : null}
          <ol className="flex flex-col gap-2">
            {data.matches.slice(0, 3).map((m) => (
              <li key={`${m.rank}-${m.matchedWindowStart}`} className="text-sm">
                <div className="flex flex-wrap justify-between gap-2">
                  <span>
                    <span className="font-mono">{m.value.toFixed(2)}</span> · {labelText(m.labelType)} ·{' '}
                    {m.matchedItemId !== null ? (
                      <Link to={`${paths.queueItem.href}/${m.matchedItemId}${location.search}`} className="font-mono">
                        {m.matchedWindowStart.slice(0, 16).replace('T', ' ')}
                      </Link>
                    ) : (
                      <span className="font-mono">{m.matchedWindowStart.slice(0, 16).replace('T', ' ')}</span>
                    )}
                  </span>
                  <span className="text-ink-muted">at {m.offsetS.toFixed(2)} s · {m.band}</span>
                </div>
                <Overlay m={m} />
              </li>
            ))}
          </ol>
          {data.matches.length > 3 ? <p className="text-xs text-ink-muted">and {data.matches.length - 3} more</p> : null}
        </>
      )}
      <p className="mt-2 text-xs text-ink-muted">{data?.caution ?? 'Waveform similarity is an automatic aid; an analyst confirms every label.'}</p>
    </section>
  );
}
