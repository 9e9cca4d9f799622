import { RequirePermission } from '@client/features/auth/components/require-permission';
import { AuditScreen } from '@client/features/audit/components/audit-screen';

/** /audit: the audit log (supervisors and admins). */
export function AuditRoute() {
  return <RequirePermission action="audit.view">{() => <AuditScreen />}</RequirePermission>;
}
