import type { BaselineView } from '@shared/schemas/station';
import { Badge } from '@client/components/ui/badge';

const sourceWords: Record<BaselineView['source'], [one: string, many: string]> = {
  dismissed: ['window an analyst dismissed as noise', 'windows an analyst dismissed as noise'],
  flagged: ['window the engine flagged “likely noise”', 'windows the engine flagged “likely noise” (until enough are dismissed by analysts)'],
  none: ['noise window', 'noise windows'],
};

type Stat = { median: number; mad: number };

const f3 = (v: number) => v.toFixed(3).replace('-', '\u2212');

/** A MAD as the score uses it: below the floor, the floor is what the score divides by. */
function MadCell({ mad, floor }: { mad: number; floor: number }) {
  if (mad >= floor) return <dd>{f3(mad)}</dd>;
  return (
    <dd>
      {f3(mad)} <span className="font-sans text-xs text-ink-muted">(score uses {f3(floor)})</span>
    </dd>
  );
}

/**
 * The station's noise baseline as the score uses it. The figures shown under "in use" are the ones
 * the score divides by: the station's own once it has `minWindows` noise windows, the network
 * default before that — with what the station has gathered so far beside them, marked as not used
 * yet. A single window has no spread (its MAD is 0 by definition), so its MAD is not shown.
 */
export function BaselineSummary({ baseline }: { baseline: BaselineView }) {
  const { count, minWindows, inUse } = baseline;
  const words = sourceWords[baseline.source][count === 1 ? 0 : 1];
  const own = baseline.log10Ratio && baseline.staLtaPeak ? { log10Ratio: baseline.log10Ratio, staLtaPeak: baseline.staLtaPeak } : null;
  const used: { log10Ratio: Stat; staLtaPeak: Stat } = inUse && own ? own : baseline.networkDefault;
  const gathered = !inUse && own ? own : null;
  const rows = [
    { key: 'log10Ratio', label: 'log10 high/low ratio' },
    { key: 'staLtaPeak', label: 'STA/LTA peak' },
  ] as const;
  return (
    <div className="flex flex-col gap-2" data-testid="baseline-summary" data-in-use={inUse ? 'station' : 'network default'}>
      <p className="text-sm">
        {inUse ? <Badge tone="ok">station baseline in use</Badge> : <Badge tone="neutral">network default in use</Badge>}{' '}
        {inUse
          ? `From this station’s last ${count} ${words}.`
          : count === 0
            ? `No noise windows from this station yet; the score compares with the network default until there are ${minWindows}.`
            : `This station has ${count} of the ${minWindows} noise windows it needs (${baseline.source === 'dismissed' ? 'dismissed by analysts' : 'flagged “likely noise” by the engine'}); until then the score compares with the network default.`}
      </p>
      <dl className={`grid max-w-xl gap-x-4 gap-y-1 font-mono text-sm ${gathered ? 'grid-cols-[auto_1fr_1fr_1fr_1fr]' : 'grid-cols-[auto_1fr_1fr]'}`}>
        <dt className="font-sans text-ink-muted" />
        <dd className="col-span-2 font-sans text-ink-muted">{inUse ? 'in use: this station' : 'in use: network default'}</dd>
        {gathered ? <dd className="col-span-2 font-sans text-ink-muted">this station so far (not used)</dd> : null}
        <dt className="font-sans text-ink-muted" />
        <dd className="font-sans text-ink-muted">median</dd>
        <dd className="font-sans text-ink-muted">MAD</dd>
        {gathered ? (
          <>
            <dd className="font-sans text-ink-muted">median</dd>
            <dd className="font-sans text-ink-muted">MAD</dd>
          </>
        ) : null}
        {rows.map((r) => (
          <div key={r.key} className="contents">
            <dt className="font-sans">{r.label}</dt>
            <dd>{f3(used[r.key].median)}</dd>
            <MadCell mad={used[r.key].mad} floor={baseline.madFloor[r.key]} />
            {gathered ? (
              <>
                <dd className="text-ink-muted">{f3(gathered[r.key].median)}</dd>
                <dd className="text-ink-muted">{count < 2 ? <span title="One window has no spread">—</span> : f3(gathered[r.key].mad)}</dd>
              </>
            ) : null}
          </div>
        ))}
      </dl>
      {gathered && count < 2 ? <p className="text-xs text-ink-muted">One window has no spread, so its MAD is not shown.</p> : null}
      <p className="text-sm text-ink-muted">
        The score is a robust z against the baseline in use: (x − median) / (1.4826 · MAD), with the MAD raised to at least {f3(baseline.madFloor.log10Ratio)} (ratio) and{' '}
        {f3(baseline.madFloor.staLtaPeak)} (STA/LTA). A baseline built from the engine’s own “likely noise” flags can drift with the station (a slowly rising noise floor is absorbed as normal);
        analyst dismissals replace them as soon as there are enough.
      </p>
    </div>
  );
}
