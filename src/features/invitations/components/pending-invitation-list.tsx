import { ErrorNotice } from '../../../components/notice';
import { Button } from '../../../components/button';
import { RoleBadge } from '../../../components/role-badge';
import { formatDateTime } from '../../../lib/format';
import { usePendingInvitations, useRevokeInvitation } from '../api/pending-invitations';

export function PendingInvitationList({ rigId }: { rigId: number }) {
  const pending = usePendingInvitations(rigId);
  const revoke = useRevokeInvitation(rigId);

  if (pending.isPending) return <p className="text-sm text-muted">Loading invitations…</p>;
  if (pending.isError) return <ErrorNotice error={pending.error} />;
  if (pending.data.length === 0) return <p className="text-sm text-muted">No invitations are waiting for an answer.</p>;

  return (
    <div className="space-y-2">
      {revoke.error ? <ErrorNotice error={revoke.error} /> : null}
      <ul className="divide-y divide-line/70">
        {pending.data.map((invitation) => (
          <li key={invitation.id} className="flex flex-wrap items-center justify-between gap-2 py-2 text-sm">
            <span className="flex flex-wrap items-center gap-2">
              <span className="font-mono text-xs">{invitation.email}</span>
              <RoleBadge role={invitation.role} />
              <span className="text-xs text-muted">
                by {invitation.invitedBy} · expires {formatDateTime(invitation.expiresAt)}
              </span>
            </span>
            <Button
              variant="dangerGhost"
              className="py-0.5"
              aria-label={`Revoke the invitation for ${invitation.email}`}
              busy={revoke.isPending && revoke.variables === invitation.id}
              onClick={() => revoke.mutate(invitation.id)}
            >
              Revoke
            </Button>
          </li>
        ))}
      </ul>
    </div>
  );
}
