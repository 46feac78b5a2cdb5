import { useState } from 'react';
import { Link } from 'react-router';
import { Button } from '../../../components/button';
import { Card, CardTitle } from '../../../components/card';
import { ErrorNotice } from '../../../components/notice';
import { StatusChip } from '../../../components/status-chip';
import { formatSeconds } from '../../../components/units';
import { useFrame } from '../api/get-frame';
import { useFrameCall } from '../api/get-frame-call';
import { useWaveform } from '../api/get-waveform';
import { BitView } from './bit-view';
import { CallDecode } from './call-decode';
import { ExchangeFrames } from './exchange-frames';
import { FcsPanel } from './fcs-panel';
import { lineBits, linePositionOf, octetsOf } from './frame-bits';
import { HexView, type HexSpan } from './hex-view';
import { LinkDecode } from './link-decode';
import { WaveformView } from './waveform-view';
import { captureScope } from '../../../lib/scope';
import { exchangeHref } from '../../../components/exchange-results';

/** context bits either side of the frame in the waveform: enough to show both flags (the loader prefetches the same) */
export const WAVEFORM_CONTEXT_BITS = 24;

async function copy(text: string): Promise<boolean> {
  try {
    await navigator.clipboard.writeText(text);
    return true;
  } catch {
    return false;
  }
}

/** Screen 6: one frame down to its bits and the signal it came from. */
interface Props {
  rigId: number;
  captureId: number;
  frameId: number;
  backTo: string;
  /** false for a frame log, which has no line samples to draw, and when the samples were not uploaded */
  hasSamples: boolean;
  /** false when the capture was decoded in the uploader's browser and only its frames came up */
  samplesKept?: boolean;
}

export function FrameInspector({ rigId, captureId, frameId, backTo, hasSamples, samplesKept = true }: Props) {
  const { frame, prevId, nextId } = useFrame(rigId, captureId, frameId);
  const waveform = useWaveform(rigId, captureId, frameId, WAVEFORM_CONTEXT_BITS, hasSamples);
  const decoded = useFrameCall(rigId, captureId, frameId);
  const [copied, setCopied] = useState<string | null>(null);
  const [activeField, setActiveField] = useState<number | null>(null);
  const spans: HexSpan[] = (decoded.data?.call?.fields ?? []).map((f) => ({ start: f.frameOffset, end: f.frameOffset + f.available, label: f.name }));
  const octets = octetsOf(frame.hexAll);
  const bits = lineBits(frame);
  const suspectLine = frame.flippedBit === null ? null : linePositionOf(bits, frame.flippedBit);
  const base = `${captureScope(rigId, captureId).page}`;
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
      <p className="text-sm text-muted" data-testid="frame-summary">
        {frame.summary}
      </p>

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
      {/* the call table sits right under the octets: pointing at a field shades its octets above */}
      <div className="space-y-4">
        <Card>
          <CardTitle aside={<span className="font-mono text-xs text-muted">{octets.length} octets</span>}>Octets</CardTitle>
          <HexView
            octets={octets}
            hasFcs={frame.fcsReceived !== null}
            suspectOctet={frame.flippedBit === null ? null : frame.flippedBit >> 3}
            spans={spans}
            activeSpan={activeField}
            onSpan={setActiveField}
          />
        </Card>
        <Card>
          <CardTitle aside={decoded.data ? <span className="text-xs text-muted">{decoded.data.map.name}</span> : null}>Call decode</CardTitle>
          {decoded.error ? <ErrorNotice error={decoded.error} /> : null}
          {decoded.isPending ? <p className="text-sm text-muted">Reading the call…</p> : null}
          {decoded.data ? <CallDecode decoded={decoded.data} activeField={activeField} onField={setActiveField} /> : null}
          {decoded.data?.exchange ? (
            <div className="mt-4 border-t border-line pt-3">
              <h3 className="mb-1.5 text-sm font-semibold">Exchange</h3>
              <ExchangeFrames
                exchange={decoded.data.exchange}
                frameId={frameId}
                frameHref={(id) => `${base}/frames/${id}`}
                roundTripsHref={`${base}/schedule?${new URLSearchParams({ station: String(decoded.data.exchange.station.address), ex: String(decoded.data.exchange.id) })}`}
                exchangeHref={(id) => exchangeHref(base, id)}
              />
            </div>
          ) : decoded.data ? (
            <p className="mt-3 text-xs text-muted">This frame is not part of an exchange.</p>
          ) : null}
        </Card>
      </div>
      <Card>
        <CardTitle aside={<span className="font-mono text-xs text-muted">{frame.bitLength} bits, {frame.stuffed.length} stuffed zeros</span>}>Bits on the line</CardTitle>
        <BitView bits={bits} suspectBit={frame.flippedBit} />
      </Card>
      <Card>
        <CardTitle aside={hasSamples ? <span className="font-mono text-xs text-muted">samples {frame.firstSample}–{frame.lastSample}</span> : null}>Waveform</CardTitle>
        {!hasSamples && !samplesKept ? (
          <p className="text-sm text-muted" data-testid="samples-elsewhere">
            The samples stayed on the uploader's machine: this capture was decoded in their browser and only its frames were uploaded, so there is no waveform
            to draw here. To see it, upload the capture file itself.
          </p>
        ) : !hasSamples ? (
          <p className="text-sm text-muted">This capture is a frame log: it holds the frames already cut, not the line samples, so there is no waveform to draw.</p>
        ) : null}
        {hasSamples && waveform.isPending ? <p className="text-sm text-muted">Reading the samples around the frame…</p> : null}
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
