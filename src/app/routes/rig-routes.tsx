import { data, Outlet, useParams, type LoaderFunctionArgs } from 'react-router';
import { idParam } from '../../../shared/schemas';
import { useSession } from '../../lib/session';
import { rigsQueryOptions } from '../../features/rigs/api/get-rigs';
import { rigQueryOptions } from '../../features/rigs/api/get-rig';
import { membersQueryOptions } from '../../features/rigs/api/members';
import { useRig } from '../../features/rigs/api/get-rig';
import { RigHeader } from '../../features/rigs/components/rig-header';
import { RigSettings } from '../../features/rigs/components/rig-settings';
import { DeleteRigPanel } from '../../features/rigs/components/delete-rig-panel';
import { StationRoster } from '../../features/rigs/components/station-roster';
import { MemberList } from '../../features/rigs/components/member-list';
import { can } from '../../features/rigs/components/permissions';
import { InviteForm } from '../../features/invitations/components/invite-form';
import { PendingInvitationList } from '../../features/invitations/components/pending-invitation-list';
import { pendingInvitationsQueryOptions } from '../../features/invitations/api/pending-invitations';
import { Card, CardTitle } from '../../components/card';
import { queryClient } from '../query-client';
import { whenSignedIn } from './session-loaders';

export const rigListLoader = whenSignedIn(async () => {
  await queryClient.ensureQueryData(rigsQueryOptions());
});

function rigIdFrom(params: LoaderFunctionArgs['params']): number {
  const parsed = idParam.safeParse(params.rigId);
  if (!parsed.success) throw data('No such rig', { status: 404 });
  return parsed.data;
}

export const rigLoader = whenSignedIn(async ({ params }: LoaderFunctionArgs) => {
  await queryClient.ensureQueryData(rigQueryOptions(rigIdFrom(params)));
});

export const membersLoader = whenSignedIn(async ({ params }: LoaderFunctionArgs) => {
  const rigId = rigIdFrom(params);
  const rig = await queryClient.ensureQueryData(rigQueryOptions(rigId));
  if (can.manageMembers(rig.myRole)) void queryClient.prefetchQuery(pendingInvitationsQueryOptions(rigId));
  await queryClient.ensureQueryData(membersQueryOptions(rigId));
});

function useRigId(): number {
  return Number(useParams().rigId);
}

export function RigRoute() {
  const rigId = useRigId();
  return (
    <div className="space-y-5">
      <RigHeader rigId={rigId} />
      <Outlet />
    </div>
  );
}

export function StationsRoute() {
  return <StationRoster rigId={useRigId()} />;
}

export function SettingsRoute() {
  const rigId = useRigId();
  return (
    <div className="space-y-5">
      <RigSettings rigId={rigId} />
      <DeleteRigPanel rigId={rigId} />
    </div>
  );
}

export function MembersRoute() {
  const rigId = useRigId();
  const rig = useRig(rigId);
  const session = useSession();
  return (
    <div className="space-y-5">
      <MemberList rigId={rigId} currentUserId={session.user?.id ?? -1} />
      {can.manageMembers(rig.myRole) ? (
        <Card>
          <CardTitle>Invite someone</CardTitle>
          <InviteForm rigId={rigId} />
          <h3 className="mb-1 mt-6 text-sm font-semibold">Waiting for an answer</h3>
          <PendingInvitationList rigId={rigId} />
        </Card>
      ) : null}
    </div>
  );
}
