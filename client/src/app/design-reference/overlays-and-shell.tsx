import { useState } from 'react';
import { roles, roleLabels } from '@shared/auth/roles';
import { SideNav, TopBar } from '@client/components/layouts/app-shell';
import { Button } from '@client/components/ui/button';
import { Dialog } from '@client/components/ui/dialog';
import { EmptyState } from '@client/components/ui/empty-state';
import { FormField } from '@client/components/ui/form-field';
import { CheckIcon } from '@client/components/ui/icons';
import { Select } from '@client/components/ui/select';
import { Loading } from '@client/components/ui/skeleton';
import { ScrollTable, Td, Th, Tr } from '@client/components/ui/table';
import { useToast } from '@client/components/ui/toast';
import { navFor, navItems } from '@client/config/paths';
import { SessionProvider, type SessionUser } from '@client/lib/session-context';
import type { Theme } from '@client/lib/theme';

/** Sample people for the previews: the demo users of the invented Kestrel Valley network. */
const previewUser: SessionUser = {
  email: 'supervisor@kestrel.example',
  displayName: 'Demo supervisor',
  roles: ['supervisor', 'analyst'],
};

/** A dialog and the three toast tones. */
export function OverlaysPreview() {
  const [dialogOpen, setDialogOpen] = useState(false);
  const { notify } = useToast();
  return (
    <div className="flex flex-wrap gap-2">
      <Button onClick={() => setDialogOpen(true)}>Open dialog</Button>
      <Button onClick={() => notify({ tone: 'ok', title: 'Labelled as quarry blast', body: 'XX.KV03.00.HHZ 2026-03-14T11:58:02.250Z' })}>Toast: done</Button>
      <Button onClick={() => notify({ tone: 'warn', title: 'Claim lapses in 1 min' })}>Toast: warning</Button>
      <Button onClick={() => notify({ tone: 'danger', title: 'Someone else labelled this item', body: 'Reload it to see their label.' })}>
        Toast: error
      </Button>
      <Dialog
        open={dialogOpen}
        onClose={() => setDialogOpen(false)}
        title="Dismiss as noise?"
        description="XX.KV04.00.HHZ · 2026-03-14T09:27:10.004Z"
        actions={
          <>
            <Button onClick={() => setDialogOpen(false)}>Cancel</Button>
            <Button variant="primary" onClick={() => setDialogOpen(false)}>
              Dismiss
            </Button>
          </>
        }
      >
        <FormField label="Noise reason">
          {(p) => (
            <Select {...p} defaultValue="machinery">
              <option value="traffic">traffic</option>
              <option value="machinery">machinery</option>
              <option value="wind">wind</option>
              <option value="instrument glitch">instrument glitch</option>
              <option value="unknown noise">unknown noise</option>
            </Select>
          )}
        </FormField>
      </Dialog>
    </div>
  );
}

/** An empty state with its action, and the loading skeleton. */
export function EmptyPreview({ theme }: { theme: Theme }) {
  return (
    <div className="flex flex-col gap-3">
      <EmptyState title="Queue is clear" action={<Button size="sm">Show dismissed items</Button>}>
        No window waits for review. New uploads appear here as soon as they are scored.
      </EmptyState>
      <Loading label={`Loading the queue (${theme} preview)`} rows={3} />
    </div>
  );
}

/** The app shell (top bar and navigation) for a signed-in supervisor. */
export function ShellPreview() {
  return (
    <SessionProvider value={{ user: previewUser }}>
      <div className="overflow-hidden rounded-sm border border-line">
        <TopBar user={previewUser} connection="live" />
        <div className="flex">
          <SideNav items={navFor(previewUser.roles, false, true)} className="w-52 shrink-0 border-r border-line bg-surface" />
          <div className="flex-1 bg-canvas p-3 text-sm text-ink-muted">Content area: takes the full width.</div>
        </div>
      </div>
    </SessionProvider>
  );
}

/** Which navigation sections each role sees. */
export function RoleTable() {
  return (
    <ScrollTable
      scrollClassName="max-w-3xl" label="Navigation by role" caption="Who sees which section in the navigation (the server checks every request regardless)"
      head={
        <Tr>
          <Th>Section</Th>
          {roles.map((r) => (
            <Th key={r} className="text-center">
              <span title={roleLabels[r]}>{r}</span>
            </Th>
          ))}
        </Tr>
      }
    >
      {navItems.map((item) => (
        <Tr key={item.key}>
          <Th scope="row" className="font-normal text-ink">
            {item.label}
          </Th>
          {roles.map((r) => {
            const yes = navFor([r], false, true).some((n) => n.key === item.key);
            return (
              <Td key={r} className="text-center">
                {yes ? (
                  <CheckIcon size={14} className="inline text-ok" title={`${r}: yes`} />
                ) : (
                  <span className="text-ink-muted">
                    –<span className="sr-only">{`${r}: no`}</span>
                  </span>
                )}
              </Td>
            );
          })}
        </Tr>
      ))}
    </ScrollTable>
  );
}
