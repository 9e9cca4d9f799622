import { useState } from 'react';
import { roleLabels, roles, type Role } from '@shared/auth/roles';
import type { AdminUser, StationOption } from '@shared/auth/schemas';
import { Button } from '@client/components/ui/button';
import { Checkbox } from '@client/components/ui/checkbox';
import { Dialog } from '@client/components/ui/dialog';
import { useToast } from '@client/components/ui/toast';
import { useSetAccess } from '@client/features/admin/api/admin';

/** Props of <AccessDialog>. */
export type AccessDialogProps = { user: AdminUser | null; stations: StationOption[]; onClose: () => void };

function sameSet<T>(a: readonly T[], b: readonly T[]): boolean {
  return a.length === b.length && a.every((x) => b.includes(x));
}

/**
 * Roles and station assignments of one person. Changing roles ends their sessions at once (they
 * sign in again and get the new rights); stations matter for the operator role.
 */
export function AccessDialog({ user, stations, onClose }: AccessDialogProps) {
  return user ? <AccessDialogBody key={user.id} user={user} stations={stations} onClose={onClose} /> : <Dialog open={false} onClose={onClose} title="Access" />;
}

function AccessDialogBody({ user, stations, onClose }: { user: AdminUser; stations: StationOption[]; onClose: () => void }) {
  const [picked, setPicked] = useState<Role[]>(user.roles);
  const [stationIds, setStationIds] = useState<number[]>(user.stationIds);
  const save = useSetAccess();
  const toast = useToast();
  const rolesChanged = !sameSet(picked, user.roles);
  const stationsChanged = !sameSet(stationIds, user.stationIds);
  const toggle = <T,>(list: T[], item: T) => (list.includes(item) ? list.filter((x) => x !== item) : [...list, item]);
  return (
    <Dialog
      open
      onClose={onClose}
      title={`Access of ${user.displayName}`}
      description="Saving new roles signs this person out everywhere, so the change applies at once."
      actions={
        <>
          <Button onClick={onClose}>Cancel</Button>
          <Button
            variant="primary"
            disabled={save.isPending || (!rolesChanged && !stationsChanged)}
            onClick={() =>
              save.mutate(
                { userId: user.id, ...(rolesChanged ? { roles: picked } : {}), ...(stationsChanged ? { stationIds } : {}) },
                {
                  onSuccess: () => {
                    toast.notify({ tone: 'ok', title: `Access of ${user.displayName} saved`, body: rolesChanged ? 'Their sessions have ended.' : undefined });
                    onClose();
                  },
                  onError: (err) => toast.notify({ tone: 'danger', title: 'Not saved', body: err.message }),
                },
              )
            }
          >
            Save
          </Button>
        </>
      }
    >
      <div className="flex flex-col gap-4">
        <fieldset className="flex flex-col gap-1.5">
          <legend className="pb-1 text-sm font-medium">Roles</legend>
          {roles.map((r) => (
            <Checkbox key={r} label={roleLabels[r]} checked={picked.includes(r)} onChange={() => setPicked(toggle(picked, r))} />
          ))}
        </fieldset>
        <fieldset className="flex flex-col gap-1.5">
          <legend className="pb-1 text-sm font-medium">Assigned stations</legend>
          <p className="text-sm text-ink-muted">{picked.includes('operator') ? 'The stations this operator looks after.' : 'Only operators act on assigned stations; other roles see every station.'}</p>
          <div className="grid max-h-56 grid-cols-2 gap-1.5 overflow-auto">
            {stations.map((s) => (
              <Checkbox key={s.id} label={<span className="font-mono">{`${s.network}.${s.code}`}</span>} checked={stationIds.includes(s.id)} onChange={() => setStationIds(toggle(stationIds, s.id))} />
            ))}
          </div>
        </fieldset>
      </div>
    </Dialog>
  );
}
