import { Card, CardTitle } from '../../../components/card';
import { ButtonLink } from '../../../components/button';
import { captureScope } from '../../../lib/scope';

/** The setup page of a capture decoded in the uploader's browser: no file here to set roles on or decode again. */
export function SamplesElsewhere({ rigId, captureId }: { rigId: number; captureId: number }) {
  return (
    <Card>
      <CardTitle>Decoded in the uploader's browser</CardTitle>
      <div className="space-y-2 text-sm" data-testid="samples-elsewhere">
        <p>
          The samples of this capture stayed on the uploader's machine: it was decoded in their browser and only the decoded frames were uploaded. The
          timeline, exchanges, fault desk and recovered files work from those frames; channel roles, decoding again and waveforms need the samples.
        </p>
        <p className="text-muted">To change the settings or see waveforms, upload the capture file itself and decode it on the server.</p>
        <ButtonLink to={`${captureScope(rigId, captureId).page}/timeline`} variant="secondary">
          Open the timeline
        </ButtonLink>
      </div>
    </Card>
  );
}
