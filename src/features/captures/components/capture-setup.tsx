import { useEffect, useRef, useState } from 'react';
import { useQueryClient } from '@tanstack/react-query';
import { useNavigate } from 'react-router';
import type { DiscoveryCandidate, RigDetail } from '../../../../shared/schemas';
import { ButtonLink } from '../../../components/button';
import { Card, CardTitle } from '../../../components/card';
import { ErrorNotice } from '../../../components/notice';
import { formatBytes } from '../../../components/units';
import { isJobActive, useCancelDecode, useJob, useStartDecode } from '../../../lib/decode-job';
import { captureKeys } from '../api/capture-keys';
import { captureQueryOptions, useCapture } from '../api/get-captures';
import { useDetection } from '../api/get-detection';
import { useSaveSettings } from '../../../lib/save-settings';
import { ChannelRoleForm } from './channel-role-form';
import { DeleteCaptureButton } from './delete-capture-button';
import { DecodeProgress } from './decode-progress';
import { canCapture } from '../../../lib/permissions';
import { SafetyPanel } from '../../../components/safety-panel';
import { clearDecodedViews, captureScope } from '../../../lib/scope';
import { useDiscovery } from '../../../components/discovery/get-discovery';
import { FinderPanel } from '../../../components/discovery/finder-panel';
import { DecodeDiagnosis } from '../../../components/discovery/decode-diagnosis';
import { directionWords } from '../../../components/discovery/direction-words';

const formatNames: Record<string, string> = {
  vcd: 'value change dump',
  csv: 'CSV sample table',
  raw: 'raw binary samples',
  octets: 'octet stream of line bits',
  framelog: 'hex frame log',
};

/** Step 2: say what each channel carries, then decode with visible progress; done → overview. */
export function CaptureSetup({ rig, captureId }: { rig: RigDetail; captureId: number }) {
  const capture = useCapture(rig.id, captureId);
  const detection = useDetection(rig.id, captureId);
  const save = useSaveSettings(rig.id, captureId);
  const start = useStartDecode(rig.id, captureId);
  const cancel = useCancelDecode(rig.id, captureId);
  const job = useJob(rig.id, captureId, capture.job !== null || start.isSuccess);
  const navigate = useNavigate();
  const queryClient = useQueryClient();
  const watched = useRef(false);
  const mayDecode = canCapture.decode(rig.myRole);
  const current = job.data ?? capture.job;
  const active = isJobActive(current);
  const discovery = useDiscovery(rig.id, captureId);
  const found = discovery.data;
  const finderBusy = !discovery.error && (!found || found.state === 'running');
  // a candidate the analyst picked; else, before anything is saved, the finder's best
  const [picked, setPicked] = useState<DiscoveryCandidate | null>(null);
  const candidate = picked ?? (!capture.settings && found?.state === 'done' && found.found ? found.candidates[0] : null);
  // a fresh capture waits for the finder (it reads at most 16 MB) so the form opens with its answer
  const waitForFinder = !capture.settings && finderBusy;
  // the form starts from the chosen candidate; handshake lines it did not tie to a link keep the detection's guess
  const formDetection =
    detection.data && candidate
      ? {
          ...detection.data,
          format: candidate.settings.format,
          suggested: { ...candidate.settings, handshake: candidate.settings.handshake?.length ? candidate.settings.handshake : (detection.data.suggested?.handshake ?? []) },
        }
      : detection.data;
  const directionNotes = Object.fromEntries(
    (found?.directions ?? []).map((v) => [
      v.link,
      v.direction === 'unknown'
        ? `Direction not inferred: ${v.reasons.join(' ') || 'no good frames on this link.'}`
        : `Inferred ${directionWords[v.direction]} (${Math.round(v.confidence * 100)} %): ${v.reasons[0] ?? ''}`,
    ]),
  );

  const state = current?.state;
  if (active) watched.current = true;
  useEffect(() => {
    if (!state || active || !watched.current) return;
    let timer: number | undefined;
    let live = true;
    // the job we watched has an outcome: the capture's status and frame count changed with it
    void (async () => {
      await queryClient.fetchQuery({ ...captureQueryOptions(rig.id, captureId), staleTime: 0 });
      await queryClient.invalidateQueries({ queryKey: captureKeys.list(rig.id) });
      // a new decode replaces every view of the decoded capture (and comparisons with it)
      clearDecodedViews(queryClient, rig.id, captureId);
      // land on the overview, after the full bar has been seen for a moment
      if (live && state === 'done') timer = window.setTimeout(() => navigate(`${captureScope(rig.id, captureId).page}`), 700);
    })();
    return () => {
      live = false;
      window.clearTimeout(timer);
    };
  }, [state, active, navigate, queryClient, rig.id, captureId]);

  return (
    <div className="grid items-start gap-5 lg:grid-cols-[1fr_22rem]">
      <div className="space-y-5">
        <Card>
          <CardTitle aside={<span className="font-mono text-xs text-muted">{formatBytes(capture.size)}</span>}>{capture.name}</CardTitle>
          {detection.isPending ? <p className="text-sm text-muted">Reading the head of the file…</p> : null}
          {detection.error ? <ErrorNotice error={detection.error} /> : null}
          {detection.data ? (
            <div className="space-y-5">
              <p className="rounded-md bg-raised px-3 py-2 text-sm" data-testid="detected-format">
                {detection.data.format ? (
                  <>
                    Detected: <strong>{formatNames[detection.data.format]}</strong> with {detection.data.channels.length} channel
                    {detection.data.channels.length === 1 ? '' : 's'}. <span className="text-muted">{detection.data.reason}</span>
                  </>
                ) : (
                  <>
                    <strong>The format could not be detected.</strong> <span className="text-muted">{detection.data.reason}</span> Choose the format
                    below.
                  </>
                )}
              </p>
              <FinderPanel discovery={found} error={discovery.error} shownKey={candidate?.key ?? null} disabled={!mayDecode || active} onUse={setPicked} />
              {waitForFinder || !formDetection ? null : (
                <ChannelRoleForm
                  key={candidate?.key ?? 'saved'}
                  rig={rig}
                  capture={candidate ? { ...capture, settings: null } : capture}
                  detection={formDetection}
                  directionNotes={directionNotes}
                  seenStations={(found?.roster ?? []).map((st) => st.address)}
                  samplesPerBit={candidate && candidate.settings.format === 'raw' && !candidate.settings.sampleRate && !candidate.clock ? candidate.samplesPerBit : null}
                  busy={save.isPending || start.isPending}
                  error={save.error ?? start.error}
                  disabled={!mayDecode || active}
                  onSubmit={(settings) => save.mutate(settings, { onSuccess: () => start.mutate() })}
                />
              )}
              {!mayDecode ? <p className="text-sm text-muted">Viewers cannot change channel roles or decode; an analyst or the owner can.</p> : null}
            </div>
          ) : null}
        </Card>
        {current ? (
          <DecodeProgress job={current} canCancel={mayDecode} cancelling={cancel.isPending} onCancel={() => cancel.mutate()} />
        ) : null}
        {cancel.error ? <ErrorNotice error={cancel.error} /> : null}
        {current?.state === 'failed' ? (
          <ErrorNotice>
            <p className="font-medium">The decoder stopped: {current.error ?? 'no reason given.'}</p>
            <p className="mt-1">
              Check the settings above: the format, which channel is the clock (or the bit rate when recovering it), the encoding (NRZ or NRZI),
              the clock edge and inversion. A wrong clock edge or encoding gives no flags at all. Then save and decode again.
            </p>
          </ErrorNotice>
        ) : null}
        {current?.state === 'done' ? <DecodeDiagnosis rig={rig} capture={capture} onRedecode={() => undefined} /> : null}
        {current?.state === 'done' ? (
          <ButtonLink to={`${captureScope(rig.id, captureId).page}`}>Open the overview</ButtonLink>
        ) : null}
        {canCapture.remove(rig.myRole) ? (
          <Card className="border-danger/40">
            <CardTitle>Delete this capture</CardTitle>
            <p className="mb-3 text-sm text-muted">
              {current?.state === 'failed' || !current
                ? 'A file that does not decode can be removed here. '
                : ''}
              Removes the stored file, its decodes, frames, exchanges, recovered files and notes for everyone. This cannot be undone.
            </p>
            <DeleteCaptureButton rigId={rig.id} capture={capture} onDeleted={() => navigate(`/rigs/${rig.id}/captures`, { replace: true })} />
          </Card>
        ) : null}
      </div>
      <SafetyPanel />
    </div>
  );
}
