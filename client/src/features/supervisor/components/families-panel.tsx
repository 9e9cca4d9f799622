import { useQuery, queryOptions } from '@tanstack/react-query';
import { useState } from 'react';
import { Link } from 'react-router';
import { familiesResponseSchema, type Family } from '@shared/schemas/similarity';
import { Select } from '@client/components/ui/select';
import { Table, TBody, Td, Th, THead, Tr } from '@client/components/ui/table';
import { paths } from '@client/config/paths';
import { apiRequest } from '@client/lib/api-client';
import { queryKeys } from '@client/lib/query-keys';
import { ErrorLine, Section } from './common';

/** Query options of the families at a threshold. */
export const familiesQuery = (minValue: number) =>
  queryOptions({ queryKey: queryKeys.similarity.families(minValue), queryFn: ({ signal }) => apiRequest(familiesResponseSchema, `/api/similarity/families?minValue=${minValue}`, { signal }) });

/** Windows per UTC hour as a row of 24 bars (height and a text title: never colour alone). */
function Hours({ hours }: { hours: number[] }) {
  const max = Math.max(1, ...hours);
  const busiest = hours.map((n, h) => ({ n, h })).filter((x) => x.n > 0).map((x) => `${String(x.h).padStart(2, '0')}h ${x.n}`).join(', ');
  return (
    <svg viewBox="0 0 96 20" className="h-5 w-24" role="img" aria-label={`windows per hour of day (UTC): ${busiest}`}>
      {hours.map((n, h) => (
        <rect key={h} x={h * 4} y={20 - (18 * n) / max} width={3} height={(18 * n) / max} fill="currentColor" />
      ))}
    </svg>
  );
}

const mix = (f: Family) =>
  Object.entries(f.labelMix)
    .sort((a, b) => b[1] - a[1])
    .map(([k, n]) => `${n} ${k}`)
    .join(', ');

/**
 * Families: groups of windows at one station that match each other at or above a threshold, with
 * their label mix and hours of day (blasts cluster in working hours; a quake cluster does not).
 */
export function FamiliesPanel() {
  const [minValue, setMinValue] = useState(0.7);
  const q = useQuery(familiesQuery(minValue));
  return (
    <Section title="Families of similar windows">
      <label className="mb-2 flex items-center gap-2 text-sm">
        Linked at correlation ≥
        <Select className="h-7" value={String(minValue)} onChange={(e) => setMinValue(Number(e.target.value))}>
          {[0.6, 0.7, 0.8, 0.9].map((v) => (
            <option key={v} value={String(v)}>
              {v.toFixed(1)}
            </option>
          ))}
        </Select>
      </label>
      <ErrorLine error={q.error} />
      <Table caption="Windows of one station linked by waveform matches; label mix and windows per UTC hour">
        <THead>
          <tr>
            <Th>Station</Th>
            <Th figure>Windows</Th>
            <Th>Labels</Th>
            <Th>Hours (UTC)</Th>
            <Th>From – to</Th>
            <Th figure>Links</Th>
          </tr>
        </THead>
        <TBody>
          {!q.data ? (
            <Tr>
              <Td colSpan={6}>{q.isPending ? 'Loading families…' : '—'}</Td>
            </Tr>
          ) : q.data.families.length === 0 ? (
            <Tr>
              <Td colSpan={6}>No windows match each other at this threshold.</Td>
            </Tr>
          ) : (
            q.data.families.map((f) => (
              <Tr key={f.id} data-testid="family-row">
                <Td>
                  <Link to={`${paths.queueItem.href}/${f.id}`} className="font-mono">
                    {f.station}
                  </Link>
                </Td>
                <Td figure>{f.size}</Td>
                <Td>{mix(f)}</Td>
                <Td>
                  <Hours hours={f.hours} />
                </Td>
                <Td className="font-mono text-xs">
                  {f.firstAt.slice(0, 16).replace('T', ' ')} – {f.lastAt.slice(0, 16).replace('T', ' ')}
                </Td>
                <Td figure>
                  {f.weakestLink.toFixed(2)}–{f.bestLink.toFixed(2)}
                </Td>
              </Tr>
            ))
          )}
        </TBody>
      </Table>
      <p className="mt-1 text-xs text-ink-muted">{q.data?.caution}</p>
    </Section>
  );
}
