import { Button } from '@client/components/ui/button';
import { Dialog } from '@client/components/ui/dialog';
import { Input } from '@client/components/ui/input';
import { describeUnsaved, type unsavedWork } from '@client/features/review/lib/review-draft';

/** What leaving would lose. */
type UnsavedWork = ReturnType<typeof unsavedWork>;

/** Props of <LeaveDialog>. */
type LeaveDialogProps = {
  open: boolean;
  itemId: number;
  unsaved: UnsavedWork;
  onStay: () => void;
  onDiscardAndLeave: () => void;
  onLeave: () => void;
};

/** Asked on Esc when picks or a note are not saved: stay, discard and leave, or leave and keep the draft. */
export function LeaveDialog({ open, itemId, unsaved, onStay, onDiscardAndLeave, onLeave }: LeaveDialogProps) {
  return (
    <Dialog
      open={open}
      onClose={onStay}
      title={`Leave item ${itemId} without saving?`}
      description={`${describeUnsaved(unsaved)} on this item ${unsaved.picks + (unsaved.note ? 1 : 0) > 1 ? 'are' : 'is'} not saved. A draft stays in this tab and comes back when you open the item again.`}
      actions={
        <>
          <Button onClick={onStay}>Stay</Button>
          <Button variant="danger" onClick={onDiscardAndLeave}>
            Discard and leave
          </Button>
          <Button variant="primary" onClick={onLeave}>
            Leave, keep draft
          </Button>
        </>
      }
    />
  );
}

/** Props of <EscalateDialog>. */
type EscalateDialogProps = {
  open: boolean;
  itemId: number;
  reason: string;
  onReason: (reason: string) => void;
  onCancel: () => void;
  onEscalate: () => void;
};

/** Escalating to the supervisors asks what they should look at (at least 3 characters). */
export function EscalateDialog({ open, itemId, reason, onReason, onCancel, onEscalate }: EscalateDialogProps) {
  const ready = reason.trim().length >= 3;
  return (
    <Dialog
      open={open}
      onClose={onCancel}
      title={`Escalate item ${itemId}`}
      description="Supervisors get it in their inbox. Say what they should look at."
      actions={
        <>
          <Button onClick={onCancel}>Cancel</Button>
          <Button variant="primary" shortcut="Enter" disabled={!ready} onClick={onEscalate}>
            Escalate
          </Button>
        </>
      }
    >
      <form
        onSubmit={(e) => {
          e.preventDefault();
          if (ready) onEscalate();
        }}
      >
        <label className="flex flex-col gap-1 text-sm font-medium">
          Reason
          <Input value={reason} onChange={(e) => onReason(e.target.value)} placeholder="e.g. felt nearby? similar arrivals at KV02 and KV03" />
        </label>
      </form>
    </Dialog>
  );
}
