import { EmptyState } from '@client/components/ui/empty-state';
import { MailboxScreen } from '@client/features/admin/components/mailbox-screen';
import { RequirePermission } from '@client/features/auth/components/require-permission';

/** /mailbox: mail caught by the local fake SMTP server (admins; only while it is in use). */
export function MailboxRoute() {
  return (
    <RequirePermission action="mailbox.view">
      {(me) =>
        me.mailbox ? (
          <MailboxScreen />
        ) : (
          <EmptyState title="No local mailbox">Mail goes to the SMTP server set in SMTP_URL, so there is nothing to show here.</EmptyState>
        )
      }
    </RequirePermission>
  );
}
