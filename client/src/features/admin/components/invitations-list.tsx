import { roleLabels } from '@shared/auth/roles';
import type { InvitationRow, StationOption } from '@shared/auth/schemas';
import { Badge, type BadgeTone } from '@client/components/ui/badge';
import { Button } from '@client/components/ui/button';
import { EmptyState } from '@client/components/ui/empty-state';
import { ScrollTable, Td, Th, ThActions, Tr } from '@client/components/ui/table';

const statusTone: Record<InvitationRow['status'], BadgeTone> = { pending: 'info', accepted: 'ok', expired: 'warn', revoked: 'neutral' };

/** Invitations, newest first, with their state; pending ones can be withdrawn. */
export function InvitationsList({ invitations, stations, onRevoke, busy }: { invitations: InvitationRow[]; stations: StationOption[]; onRevoke: (inv: InvitationRow) => void; busy?: boolean }) {
  const code = new Map(stations.map((s) => [s.id, `${s.network}.${s.code}`]));
  if (invitations.length === 0) return <EmptyState title="No invitations yet">Invite a person with the form above; they get a link by e-mail that works once, for 72 hours.</EmptyState>;
  return (
    <ScrollTable
      label="Invitations" caption="Invitations sent, newest first (times in UTC)" captionHidden
      head={
        <Tr>
          <Th>E-mail</Th>
          <Th>Name</Th>
          <Th>Roles</Th>
          <Th>Stations</Th>
          <Th>Status</Th>
          <Th figure>Sent</Th>
          <Th figure>Link works until</Th>
          <ThActions />
        </Tr>
      }
    >
      {invitations.map((inv) => (
        <Tr key={inv.id}>
          <Td className="font-mono text-sm">{inv.email}</Td>
          <Td>{inv.displayName}</Td>
          <Td>{inv.roles.map((r) => roleLabels[r]).join(', ')}</Td>
          <Td className="font-mono text-sm">{inv.stationIds.map((id) => code.get(id) ?? id).join(', ') || '—'}</Td>
          <Td>
            <Badge tone={statusTone[inv.status]}>{inv.status}</Badge>
          </Td>
          <Td figure>{inv.createdAt}</Td>
          <Td figure>{inv.expiresAt}</Td>
          <Td className="text-right">
            {inv.status === 'pending' ? (
              <Button size="sm" variant="quiet" disabled={busy} onClick={() => onRevoke(inv)} aria-label={`Withdraw the invitation to ${inv.email}`}>
                Withdraw
              </Button>
            ) : null}
          </Td>
        </Tr>
      ))}
    </ScrollTable>
  );
}
