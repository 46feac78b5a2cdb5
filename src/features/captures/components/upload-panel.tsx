import { useNavigate, useSearchParams } from 'react-router';
import { Card, CardTitle } from '../../../components/card';
import { ErrorNotice } from '../../../components/notice';
import { ProgressBar } from '../../../components/progress-bar';
import { formatBytes } from '../../../components/units';
import { errorText } from '../../../lib/error-text';
import { isApiError } from '../../../lib/api';
import { useUploadCapture } from '../api/upload-capture';
import { DropZone } from './drop-zone';
import { SafetyPanel } from '../../../components/safety-panel';
import { captureScope } from '../../../lib/scope';
import { LocalDecodePanel } from './local-decode-panel';

/** The server's message as a sentence: one full stop at the end, whatever it came with. */
function sentence(text: string): string {
  const t = text.trim();
  return /[.!?]$/.test(t) ? t : `${t}.`;
}

/** Step 1 of a capture: the file goes up with visible progress, then the roles form takes over. */
export function UploadPanel({ rigId }: { rigId: number }) {
  const upload = useUploadCapture(rigId);
  const navigate = useNavigate();
  const p = upload.progress;
  const [params, setParams] = useSearchParams();
  const local = params.get('mode') === 'local';

  function send(file: File) {
    if (file.size === 0) return;
    upload.mutate(file, { onSuccess: (row) => navigate(`${captureScope(rigId, row.id).page}/setup`) });
  }

  return (
    <div className="grid items-start gap-5 lg:grid-cols-[1fr_22rem]">
      <Card>
        <CardTitle>Upload a capture</CardTitle>
        <div className="mb-4 inline-flex rounded-md border border-line p-0.5 text-sm" role="radiogroup" aria-label="Where the capture is decoded">
          {([
            [false, 'Decode on the server'],
            [true, 'Decode here first'],
          ] as const).map(([mode, label]) => (
            <button
              key={label}
              type="button"
              role="radio"
              aria-checked={local === mode}
              disabled={upload.isPending}
              onClick={() => setParams(mode ? { mode: 'local' } : {}, { replace: true })}
              className={`rounded px-3 py-1 ${local === mode ? 'bg-raised font-medium text-text' : 'text-muted hover:text-text'}`}
            >
              {label}
            </button>
          ))}
        </div>
        {local ? <LocalDecodePanel rigId={rigId} /> : (
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
              {isApiError(upload.error, 422) ? (
                <>
                  <p className="font-medium">{sentence(upload.error.message)}</p>
                  <p className="mt-1">
                    Nothing was stored. Export the recording from the analyzer as a value change dump, a CSV table with a header row, raw binary
                    samples or an octet stream, then drop that file here.
                  </p>
                </>
              ) : (
                <p>{errorText(upload.error)}</p>
              )}
              <button type="button" className="mt-2 text-sm font-medium text-link hover:underline" onClick={() => upload.reset()}>
                Clear this message
              </button>
            </ErrorNotice>
          ) : null}
        </div>
        )}
      </Card>
      <SafetyPanel />
    </div>
  );
}
