import { useState } from 'react';
import { useNavigate } from 'react-router';
import { roleSchema, type Member, type Role } from '../../../../shared/schemas';
import { Button } from '../../../components/button';
import { Card, CardTitle } from '../../../components/card';
import { ErrorNotice } from '../../../components/notice';
import { RoleBadge } from '../../../components/role-badge';
import { useRig } from '../api/get-rig';
import { useChangeMemberRole, useMembers, useRemoveMember } from '../api/members';
import { can } from './permissions';

export function MemberList({ rigId, currentUserId }: { rigId: number; currentUserId: number }) {
  const rig = useRig(rigId);
  const members = useMembers(rigId);
  const manage = can.manageMembers(rig.myRole);
  return (
    <Card>
      <CardTitle>Members</CardTitle>
      <table className="w-full text-sm">
        <thead>
          <tr className="border-b border-line text-left text-xs uppercase tracking-wide text-muted">
            <th className="py-2 pr-4 font-medium">Name</th>
            <th className="py-2 pr-4 font-medium">E-mail</th>
            <th className="py-2 pr-4 font-medium">Role</th>
            <th className="py-2 text-right font-medium">
              <span className="sr-only">Actions</span>
            </th>
          </tr>
        </thead>
        <tbody>
          {members.map((member) => (
            <MemberRow key={member.userId} rigId={rigId} member={member} manage={manage} isMe={member.userId === currentUserId} />
          ))}
        </tbody>
      </table>
    </Card>
  );
}

function MemberRow({ rigId, member, manage, isMe }: { rigId: number; member: Member; manage: boolean; isMe: boolean }) {
  const changeRole = useChangeMemberRole(rigId);
  const remove = useRemoveMember(rigId);
  const navigate = useNavigate();
  const [confirming, setConfirming] = useState(false);
  const error = changeRole.error ?? remove.error;
  // A member may always leave; only owners remove others.
  const canRemove = manage || isMe;

  function doRemove() {
    remove.mutate(member.userId, { onSuccess: () => (isMe ? navigate('/', { replace: true }) : setConfirming(false)) });
  }

  return (
    <>
      <tr className="border-b border-line/70 last:border-0">
        <td className="py-2 pr-4">
          {member.name}
          {isMe ? <span className="ml-1 text-xs text-muted">(you)</span> : null}
        </td>
        <td className="py-2 pr-4 font-mono text-xs">{member.email}</td>
        <td className="py-2 pr-4">
          {manage ? (
            <select
              aria-label={`Role of ${member.name}`}
              value={member.role}
              disabled={changeRole.isPending}
              onChange={(e) => changeRole.mutate({ userId: member.userId, role: e.target.value as Role })}
              className="rounded-md border border-line bg-surface px-2 py-1 text-sm"
            >
              {roleSchema.options.map((role) => (
                <option key={role} value={role}>
                  {role}
                </option>
              ))}
            </select>
          ) : (
            <RoleBadge role={member.role} />
          )}
        </td>
        <td className="py-1.5 text-right">
          {canRemove ? (
            confirming ? (
              <span className="inline-flex items-center gap-1">
                <span className="mr-1 text-xs text-muted">{isMe ? 'Leave this rig?' : `Remove ${member.name}?`}</span>
                <Button variant="danger" className="py-0.5" busy={remove.isPending} onClick={doRemove}>
                  {isMe ? 'Leave' : 'Remove'}
                </Button>
                <Button variant="secondary" className="py-0.5" onClick={() => setConfirming(false)}>
                  Cancel
                </Button>
              </span>
            ) : (
              <Button
                variant="dangerGhost"
                className="py-0.5"
                aria-label={isMe ? 'Leave this rig' : `Remove ${member.name}`}
                onClick={() => setConfirming(true)}
              >
                {isMe ? 'Leave rig' : 'Remove'}
              </Button>
            )
          ) : null}
        </td>
      </tr>
      {error ? (
        <tr>
          <td colSpan={4} className="pb-2">
            <ErrorNotice error={error} />
          </td>
        </tr>
      ) : null}
    </>
  );
}
