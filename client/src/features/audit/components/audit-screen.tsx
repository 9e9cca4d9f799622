import { useState } from 'react';
import { Button } from '@client/components/ui/button';
import { EmptyState } from '@client/components/ui/empty-state';
import { FormField } from '@client/components/ui/form-field';
import { Input } from '@client/components/ui/input';
import { Select } from '@client/components/ui/select';
import { Loading } from '@client/components/ui/skeleton';
import { ScrollTable, Td, Th, Tr } from '@client/components/ui/table';
import { UtcTimeInput } from '@client/components/ui/utc-time-input';
import { auditPageSize, useAuditPage, type AuditFilters } from '@client/features/audit/api/audit';

/** Action groups offered in the filter; a prefix ending in "." matches the whole group. */
export const auditActionChoices: { value: string; label: string }[] = [
  { value: '', label: 'Any action' },
  { value: 'auth.', label: 'Sign-in and sessions (auth.*)' },
  { value: 'auth.sign_in_failed', label: 'Failed sign-ins' },
  { value: 'invitation.', label: 'Invitations (invitation.*)' },
  { value: 'user.', label: 'Users and roles (user.*)' },
  { value: 'queue.', label: 'Queue actions (queue.*)' },
  { value: 'station.', label: 'Stations (station.*)' },
];

/** One line of words for an audit row's details (JSON otherwise). */
export function detailsText(details: unknown): string {
  if (details === null || details === undefined) return '';
  if (typeof details !== 'object') return typeof details === 'string' ? details : (JSON.stringify(details) ?? '');
  return Object.entries(details)
    .map(([k, v]) => `${k}: ${Array.isArray(v) ? v.join(', ') || '—' : typeof v === 'object' && v !== null ? JSON.stringify(v) : String(v)}`)
    .join('; ');
}

const empty: AuditFilters = { action: '', actor: '', targetType: '', from: '', to: '' };

/** The audit log for supervisors and admins: newest first, filtered and paged. */
export function AuditScreen() {
  const [draft, setDraft] = useState<AuditFilters>(empty);
  const [filters, setFilters] = useState<AuditFilters>(empty);
  const [offset, setOffset] = useState(0);
  const page = useAuditPage(filters, offset);
  const set = (k: keyof AuditFilters) => (e: { target: { value: string } }) => setDraft({ ...draft, [k]: e.target.value });
  return (
    <div className="flex max-w-7xl flex-col gap-4">
      <header>
        <h1 className="text-xl font-semibold">Audit log</h1>
        <p className="text-base text-ink-muted">Who did what, on what, when (UTC) and from where. Rows are only ever added.</p>
      </header>
      <form
        className="flex flex-wrap items-end gap-3"
        aria-label="Filter the audit log"
        onSubmit={(e) => {
          e.preventDefault();
          setOffset(0);
          setFilters(draft);
        }}
      >
        <FormField label="Action" className="w-64">
          {(p) => (
            <Select {...p} value={draft.action} onChange={set('action')}>
              {auditActionChoices.map((c) => (
                <option key={c.value} value={c.value}>
                  {c.label}
                </option>
              ))}
            </Select>
          )}
        </FormField>
        <FormField label="Who" className="w-56">
          {(p) => <Input {...p} type="search" placeholder="part of an e-mail" value={draft.actor} onChange={set('actor')} />}
        </FormField>
        <FormField label="On what" className="w-40">
          {(p) => <Input {...p} placeholder="user, station…" value={draft.targetType} onChange={set('targetType')} />}
        </FormField>
        <UtcTimeInput optional label="From (UTC)" className="w-56" value={draft.from || undefined} onChange={(iso) => setDraft({ ...draft, from: iso ?? '' })} />
        <UtcTimeInput optional label="To (UTC, included)" className="w-56" value={draft.to || undefined} onChange={(iso) => setDraft({ ...draft, to: iso ?? '' })} />
        <Button type="submit" variant="primary">
          Apply
        </Button>
        <Button
          onClick={() => {
            setDraft(empty);
            setFilters(empty);
            setOffset(0);
          }}
        >
          Clear
        </Button>
      </form>
      {page.isPending ? (
        <Loading label="Loading the audit log…" rows={6} />
      ) : page.isError ? (
        <EmptyState title="The audit log could not be loaded">{page.error.message}</EmptyState>
      ) : page.data.rows.length === 0 ? (
        <EmptyState title="No rows match">Widen the filters or clear them.</EmptyState>
      ) : (
        <>
          <ScrollTable
            label="Audit log rows" caption={`Audit rows ${offset + 1} to ${offset + page.data.rows.length} of ${page.data.total}, newest first`}
            head={
              <Tr>
                <Th figure>When (UTC)</Th>
                <Th>Who</Th>
                <Th>What</Th>
                <Th>On what</Th>
                <Th>Details</Th>
                <Th>From</Th>
              </Tr>
            }
          >
            {page.data.rows.map((r) => (
              <Tr key={r.id}>
                <Td figure>{r.createdAt}</Td>
                <Td className="font-mono text-sm">{r.actorLabel ?? r.actorUserId ?? '—'}</Td>
                <Td className="font-mono text-sm">{r.action}</Td>
                <Td className="font-mono text-sm">{r.targetType ? `${r.targetType}${r.targetId ? ` ${r.targetId}` : ''}` : '—'}</Td>
                <Td className="max-w-md truncate text-sm" title={detailsText(r.details)}>
                  {detailsText(r.details)}
                </Td>
                <Td className="font-mono text-sm">{r.ipAddress ?? '—'}</Td>
              </Tr>
            ))}
          </ScrollTable>
          <div className="flex items-center gap-2 text-sm">
            <Button size="sm" disabled={offset === 0} onClick={() => setOffset(Math.max(0, offset - auditPageSize))}>
              Newer
            </Button>
            <span className="text-ink-muted">
              {offset + 1}–{offset + page.data.rows.length} of {page.data.total}
            </span>
            <Button size="sm" disabled={offset + auditPageSize >= page.data.total} onClick={() => setOffset(offset + auditPageSize)}>
              Older
            </Button>
          </div>
        </>
      )}
    </div>
  );
}
