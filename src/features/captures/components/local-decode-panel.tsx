import { useState } from 'react';
import { useNavigate } from 'react-router';
import { Button } from '../../../components/button';
import { ErrorNotice } from '../../../components/notice';
import { ProgressBar } from '../../../components/progress-bar';
import { SelectField, TextField } from '../../../components/field';
import { formatBytes, formatCount } from '../../../components/units';
import { errorText } from '../../../lib/error-text';
import { useUploadCapture } from '../api/upload-capture';
import { DropZone } from './drop-zone';
import { useLocalDecode } from '../api/use-local-decode';
import { useUploadDecoded } from '../api/upload-decoded';
import type { LocalHints } from '../local-decode/messages';
import { LocalFrames, statusWords } from './local-frames';
import { parseRate } from './parse-rate';
import { captureScope } from '../../../lib/scope';

function settingsLine(s: { format: string; clock: string | null; links: { channel: string }[]; encoding: string; edge: string; invert: boolean; bitRate: number | null; sampleRate: number | null }): string {
  const clock = s.clock ? `clock ${s.clock} (${s.edge} edge)` : `clock recovered at ${s.bitRate ?? '?'} bit/s`;
  return `${s.format}, ${clock}, data ${s.links.map((l) => l.channel).join(', ')}, ${s.encoding.toUpperCase()}${s.invert ? ' inverted' : ''}`;
}

/**
 * The upload page's second mode: the capture is decoded in this tab (settings finder, then the
 * decoder, in a worker), and the user then sends either the capture or only what was decoded.
 */
export function LocalDecodePanel({ rigId }: { rigId: number }) {
  const navigate = useNavigate();
  const local = useLocalDecode();
  const uploadDecoded = useUploadDecoded(rigId);
  const uploadCapture = useUploadCapture(rigId);
  const [file, setFile] = useState<File | null>(null);
  const [sampleRate, setSampleRate] = useState('');
  const [rawWidth, setRawWidth] = useState('auto');
  const [names, setNames] = useState('');
  const [bitRate, setBitRate] = useState('');
  const [hintError, setHintError] = useState<string | null>(null);
  const s = local.state;
  const busy = s.phase === 'finding' || s.phase === 'decoding';

  function begin(f: File) {
    if (f.size === 0) return;
    setFile(f);
    const hints: LocalHints = {};
    if (sampleRate.trim()) {
      const r = parseRate(sampleRate);
      if (r === null) return setHintError('Write the sample rate as a number with an optional k, M or G, e.g. 4M');
      hints.sampleRate = r;
    }
    if (bitRate.trim()) {
      const r = parseRate(bitRate);
      if (r === null) return setHintError('Write the bit rate as a number with an optional k or M, e.g. 800k');
      hints.bitRate = r;
    }
    if (rawWidth !== 'auto') hints.rawWidth = rawWidth === '2' ? 2 : 1;
    const list = names
      .split(',')
      .map((n) => n.trim())
      .filter(Boolean);
    if (list.length > 0) hints.channelNames = list;
    setHintError(null);
    uploadDecoded.reset();
    local.start(f, hints);
  }

  return (
    <div className="space-y-4" data-testid="local-decode">
      <p className="text-sm text-muted">
        The file is decoded here, in this browser tab. You then choose: upload the capture itself, or keep it on this computer and upload only the decoded
        frames — a much smaller file. Without the samples the server cannot draw waveforms or decode the capture again.
      </p>
      <div className="grid gap-3 sm:grid-cols-4">
        <TextField label="Sample rate" placeholder="e.g. 4M" value={sampleRate} onChange={(e) => setSampleRate(e.target.value)} hint="raw samples carry none" />
        <SelectField
          label="Raw sample width"
          value={rawWidth}
          onChange={(e) => setRawWidth(e.target.value)}
          options={[
            { value: 'auto', label: 'find out' },
            { value: '1', label: '1 byte' },
            { value: '2', label: '2 bytes' },
          ]}
        />
        <TextField label="Channel names" placeholder="clk, txd, rxd" value={names} onChange={(e) => setNames(e.target.value)} hint="raw bits 0, 1, 2… or an octet stream’s line, comma-separated" />
        <TextField label="Bit rate" placeholder="e.g. 800k" value={bitRate} onChange={(e) => setBitRate(e.target.value)} hint="only without a clock line" />
      </div>
      {hintError ? <ErrorNotice>{hintError}</ErrorNotice> : null}
      <DropZone onFile={begin} disabled={busy} />

      {s.phase === 'finding' ? (
        <ProgressBar label={`Finding the settings of ${file?.name ?? 'the file'}`} value={s.budget > 0 ? s.bytesRead / s.budget : null} detail={`${formatBytes(s.bytesRead)} read`} />
      ) : null}
      {s.phase === 'not-found' ? (
        <ErrorNotice>
          <p className="font-medium">No setting decoded a good frame. {s.summary}</p>
          <ul className="mt-1 list-disc pl-5">
            {s.advice.map((a) => (
              <li key={a}>{a}</li>
            ))}
          </ul>
        </ErrorNotice>
      ) : null}
      {s.phase === 'failed' ? <ErrorNotice>{s.error}</ErrorNotice> : null}
      {s.phase === 'decoding' || s.phase === 'done' ? (
        <p className="text-sm" data-testid="local-settings">
          Settings found: {settingsLine(s.settings)}. <span className="text-muted">{s.summary}</span>
        </p>
      ) : null}
      {s.phase === 'decoding' ? (
        <ProgressBar
          label="Decoding in this tab"
          value={s.total > 0 ? s.bytesRead / s.total : null}
          detail={`${formatBytes(s.bytesRead)} of ${formatBytes(s.total)} · ${formatCount(s.frames)} frames`}
        />
      ) : null}
      {s.phase === 'done' && file ? (
        <div className="space-y-3" data-testid="local-result">
          <p className="text-sm font-medium">
            Decoded here: <span data-testid="local-frame-count">{formatCount(s.result.frames)}</span> frames from {formatBytes(file.size)} in {s.result.seconds.toFixed(1)} s.
          </p>
          <table className="text-xs" aria-label="Frames per link">
            <tbody>
              {s.result.links.map((l) => (
                <tr key={l.link} data-testid="local-link" data-link={l.link}>
                  <td className="pr-3 font-mono">{l.link}</td>
                  <td>
                    {Object.entries(l.byStatus)
                      .map(([k, v]) => `${v} ${statusWords[k] ?? k}`)
                      .join(', ')}
                  </td>
                </tr>
              ))}
            </tbody>
          </table>
          <p className="text-xs text-muted">
            Fingerprint of the decoded frames: <span className="font-mono" data-testid="local-fingerprint">{s.result.framesFingerprint.slice(0, 16)}</span>
          </p>
          <div className="flex flex-wrap gap-2">
            <Button
              busy={uploadDecoded.isPending}
              disabled={uploadCapture.isPending}
              onClick={() => uploadDecoded.mutate(s.result.file, { onSuccess: (row) => navigate(`${captureScope(rigId, row.id).page}/timeline`) })}
            >
              Upload only the decoded frames ({formatBytes(s.result.file.size)})
            </Button>
            <Button
              variant="secondary"
              busy={uploadCapture.isPending}
              disabled={uploadDecoded.isPending}
              onClick={() => uploadCapture.mutate(file, { onSuccess: (row) => navigate(`${captureScope(rigId, row.id).page}/setup`) })}
            >
              Upload the capture ({formatBytes(file.size)})
            </Button>
          </div>
          {uploadDecoded.progress && uploadDecoded.isPending ? (
            <ProgressBar label="Uploading the decoded frames" value={uploadDecoded.progress.total > 0 ? uploadDecoded.progress.loaded / uploadDecoded.progress.total : null} />
          ) : null}
          {uploadCapture.progress && uploadCapture.isPending ? (
            <ProgressBar label="Uploading the capture" value={uploadCapture.progress.total > 0 ? uploadCapture.progress.loaded / uploadCapture.progress.total : null} />
          ) : null}
          {uploadDecoded.error ? <ErrorNotice>{errorText(uploadDecoded.error)}</ErrorNotice> : null}
          {uploadCapture.error ? <ErrorNotice>{errorText(uploadCapture.error)}</ErrorNotice> : null}
        </div>
      ) : null}
      <LocalFrames frames={local.frames} />
    </div>
  );
}
