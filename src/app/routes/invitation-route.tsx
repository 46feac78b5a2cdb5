import { useQueryClient } from '@tanstack/react-query';
import { useNavigate } from 'react-router';
import { AcceptInvitationPage } from '../../features/invitations/components/accept-invitation-page';
import { replaceSession } from '../../lib/session';

/** Accepting signs the invitee in: the session feature takes the new user, then we open the rig. */
export function InvitationRoute() {
  const queryClient = useQueryClient();
  const navigate = useNavigate();
  return (
    <AcceptInvitationPage
      onAccepted={(result) => {
        replaceSession(queryClient, result);
        void navigate(`/rigs/${result.rigId}`, { replace: true });
      }}
    />
  );
}
