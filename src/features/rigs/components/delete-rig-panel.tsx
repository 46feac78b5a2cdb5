import { useState } from 'react';
import { useNavigate } from 'react-router';
import { Button } from '../../../components/button';
import { Card, CardTitle } from '../../../components/card';
import { ErrorNotice } from '../../../components/notice';
import { useQueryClient } from '@tanstack/react-query';
import { forgetRig, useDeleteRig } from '../api/delete-rig';
import { useRig } from '../api/get-rig';
import { can } from './permissions';

export function DeleteRigPanel({ rigId }: { rigId: number }) {
  const rig = useRig(rigId);
  const deleteRig = useDeleteRig(rigId);
  const navigate = useNavigate();
  const queryClient = useQueryClient();
  const [confirming, setConfirming] = useState(false);
  if (!can.editRig(rig.myRole)) return null;
  return (
    <Card className="border-danger/40">
      <CardTitle>Delete this rig</CardTitle>
      <p className="mb-3 text-sm text-muted">Removes the rig, its stations and its memberships for everyone. This cannot be undone.</p>
      {deleteRig.error ? <ErrorNotice error={deleteRig.error} /> : null}
      {confirming ? (
        <div className="mt-2 flex flex-wrap gap-2">
          <Button variant="danger" busy={deleteRig.isPending} onClick={() => deleteRig.mutate(undefined, {
                onSuccess: async () => {
                  await navigate('/', { replace: true });
                  forgetRig(queryClient, rigId);
                },
              })}>
            Yes, delete “{rig.name}”
          </Button>
          <Button variant="secondary" onClick={() => setConfirming(false)}>
            Keep it
          </Button>
        </div>
      ) : (
        <Button variant="danger" onClick={() => setConfirming(true)}>
          Delete rig…
        </Button>
      )}
    </Card>
  );
}
