import { useNavigate } from 'react-router';
import { Card, CardTitle } from '../../../components/card';
import { ErrorNotice } from '../../../components/notice';
import { ProgressBar } from '../../../components/progress-bar';
import { formatBytes } from '../../../components/units';
import { errorText } from '../../../lib/error-text';
import { isApiError } from '../../../lib/api';
import { useUploadCapture } from '../api/upload-capture';
import { DropZone } from './drop-zone';
import { SafetyPanel } from './safety-panel';

/** Step 1 of a capture: the file goes up with visible progress, then the roles form takes over. */
export function UploadPanel({ rigId }: { rigId: number }) {
  const upload = useUploadCapture(rigId);
  const navigate = useNavigate();
  const p = upload.progress;

  function send(file: File) {
    if (file.size === 0) return;
    upload.mutate(file, { onSuccess: (row) => navigate(`/rigs/${rigId}/captures/${row.id}/setup`) });
  }

  return (
    <div className="grid items-start gap-5 lg:grid-cols-[1fr_22rem]">
      <Card>
        <CardTitle>Upload a capture</CardTitle>
        <div className="space-y-4">
          <DropZone onFile={send} disabled={upload.isPending} />
          {p && (upload.isPending || upload.isSuccess) ? (
            <ProgressBar
              label="Uploading"
              value={p.total > 0 ? p.loaded / p.total : null}
              detail={`${formatBytes(p.loaded)} of ${formatBytes(p.total)}`}
            />
          ) : null}
          {upload.error ? (
            <ErrorNotice>
              {isApiError(upload.error, 422)
                ? `Flagline cannot read this file: ${upload.error.message} Export the capture from the analyzer as a value change dump or a CSV table with a header row and try again.`
                : errorText(upload.error)}
            </ErrorNotice>
          ) : null}
        </div>
      </Card>
      <SafetyPanel />
    </div>
  );
}
