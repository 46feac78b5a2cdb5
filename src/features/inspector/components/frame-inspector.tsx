import { useState } from 'react';
import { Link } from 'react-router';
import { Button } from '../../../components/button';
import { Card, CardTitle } from '../../../components/card';
import { ErrorNotice } from '../../../components/notice';
import { StatusChip } from '../../../components/status-chip';
import { formatSeconds } from '../../../components/units';
import { useFrame } from '../api/get-frame';
import { useWaveform } from '../api/get-waveform';
import { BitView } from './bit-view';
import { FcsPanel } from './fcs-panel';
import { lineBits, linePositionOf, octetsOf } from './frame-bits';
import { HexView } from './hex-view';
import { LinkDecode } from './link-decode';
import { WaveformView } from './waveform-view';

/** context bits either side of the frame in the waveform: enough to show both flags */
const WAVEFORM_CONTEXT_BITS = 24;

async function copy(text: string): Promise<boolean> {
  try {
    await navigator.clipboard.writeText(text);
    return true;
  } catch {
    return false;
  }
}

/** Screen 6: one frame down to its bits and the signal it came from. */
export function FrameInspector({ rigId, captureId, frameId, backTo }: { rigId: number; captureId: number; frameId: number; backTo: string }) {
  const { frame, prevId, nextId } = useFrame(rigId, captureId, frameId);
  const waveform = useWaveform(rigId, captureId, frameId, WAVEFORM_CONTEXT_BITS);
  const [copied, setCopied] = useState<string | null>(null);
  const octets = octetsOf(frame.hexAll);
  const bits = lineBits(frame);
  const suspectLine = frame.flippedBit === null ? null : linePositionOf(bits, frame.flippedBit);
  const base = `/rigs/${rigId}/captures/${captureId}`;
  const spacedHex = octets.map((o) => o.toString(16).padStart(2, '0')).join(' ');

  async function copyText(label: string, text: string) {
    setCopied((await copy(text)) ? `${label} copied.` : `Could not reach the clipboard; select the text instead.`);
  }

  return (
    <div className="space-y-4">
      <div className="flex flex-wrap items-center justify-between gap-3">
        <div className="flex flex-wrap items-center gap-3">
          <Link to={backTo} className="text-sm text-link hover:underline">
            ← Timeline
          </Link>
          <h2 className="text-lg font-semibold">
            Frame {frame.seq} on {frame.link}
          </h2>
          <StatusChip status={frame.status} />
          <span className="font-mono text-sm text-muted">{formatSeconds(frame.t)} s</span>
        </div>
        <div className="flex flex-wrap items-center gap-2">
          {prevId !== null ? (
            <Link to={`${base}/frames/${prevId}`} className="text-sm text-link hover:underline">
              ← previous on link
            </Link>
          ) : null}
          {nextId !== null ? (
            <Link to={`${base}/frames/${nextId}`} className="text-sm text-link hover:underline">
              next on link →
            </Link>
          ) : null}
          <Button variant="secondary" onClick={() => void copyText('Hex', spacedHex)}>
            Copy as hex
          </Button>
          <Button variant="secondary" onClick={() => void copyText('Permalink', `${window.location.origin}${base}/frames/${frameId}`)}>
            Copy permalink
          </Button>
        </div>
      </div>
      {copied ? <p role="status" className="text-xs text-muted">{copied}</p> : null}
      <p className="text-sm text-muted">{frame.summary}</p>

      <div className="grid gap-4 lg:grid-cols-2">
        <Card>
          <CardTitle>Frame check sequence</CardTitle>
          <FcsPanel frame={frame} />
        </Card>
        <Card>
          <CardTitle>Link decode</CardTitle>
          <LinkDecode frame={frame} />
        </Card>
      </div>
      <Card>
        <CardTitle aside={<span className="font-mono text-xs text-muted">{octets.length} octets</span>}>Octets</CardTitle>
        <HexView octets={octets} hasFcs={frame.fcsReceived !== null} suspectOctet={frame.flippedBit === null ? null : frame.flippedBit >> 3} />
      </Card>
      <Card>
        <CardTitle aside={<span className="font-mono text-xs text-muted">{frame.bitLength} bits, {frame.stuffed.length} stuffed zeros</span>}>Bits on the line</CardTitle>
        <BitView bits={bits} suspectBit={frame.flippedBit} />
      </Card>
      <Card>
        <CardTitle aside={<span className="font-mono text-xs text-muted">samples {frame.firstSample}–{frame.lastSample}</span>}>Waveform</CardTitle>
        {waveform.isPending ? <p className="text-sm text-muted">Reading the samples around the frame…</p> : null}
        {waveform.error ? <ErrorNotice error={waveform.error} /> : null}
        {waveform.data ? (
          waveform.data.channels.length === 0 ? (
            <p className="text-sm text-muted">This capture has no sampled channels (a frame log or octet stream), so there is no waveform to draw.</p>
          ) : (
            <WaveformView window={waveform.data} frame={frame} bits={bits} suspect={suspectLine} />
          )
        ) : null}
      </Card>
    </div>
  );
}
