import { useMemo, useState } from 'react';
import { Link } from 'react-router';
import { applyFieldMap, type CallDirection, type FieldMap } from '../../../../shared/decoder/calls';
import type { PreviewEmpty, PreviewFrame } from '../../../../shared/schemas';
import { ErrorNotice } from '../../../components/notice';
import { usePreviewFrames } from '../api/get-preview-frames';
import { swatch } from './field-colours';

interface Props {
  rigId: number;
  /** the draft when it is valid, else the last valid draft */
  map: FieldMap | null;
  draftValid: boolean;
  captureId: number | null;
  frameId: number | null;
  onPick: (captureId: number | null, frameId: number | null) => void;
  /** opens the layout the preview used in the form above */
  onShowLayout: (index: number) => void;
}

const hex2 = (b: number) => b.toString(16).toUpperCase().padStart(2, '0');
const control = 'rounded border border-line bg-surface px-2 py-1 text-sm';

function hexToBytes(hex: string): Uint8Array {
  const out = new Uint8Array(hex.length >> 1);
  for (let i = 0; i < out.length; i++) out[i] = parseInt(hex.slice(i * 2, i * 2 + 2), 16);
  return out;
}

/** The draft applied in the browser to one frame's information field: coloured octets and decoded values. */
export function FramePreview({ rigId, map, draftValid, captureId, frameId, onPick, onShowLayout }: Props) {
  // one request gives the captures, the first I frames (every octet) and, from the link, a frame by id
  const list = usePreviewFrames(rigId, captureId, null);
  const capture = list.data?.captureId ?? captureId;
  const frames = list.data?.frames;
  const listed = frameId === null ? frames?.[0] : frames?.find((f) => f.id === frameId);
  // a frame typed by id, or not among the first ones: asked for on its own
  const asked = usePreviewFrames(rigId, captureId, frameId, frameId !== null && list.isSuccess && !listed);
  const shown: PreviewFrame | undefined = listed ?? asked.data?.frame ?? undefined;
  const frameChoice = frameId ?? shown?.id ?? null;
  const frame = useMemo(() => {
    if (!shown) return null;
    const bytes = hexToBytes(shown.octets);
    return { frame: shown, bytes, infoOffset: shown.infoOffset, info: bytes.subarray(shown.infoOffset, shown.infoOffset + shown.infoLength) };
  }, [shown]);
  const [directionChoice, setDirectionChoice] = useState<'auto' | CallDirection>('auto');
  const [typedId, setTypedId] = useState('');

  const direction: CallDirection = useMemo(() => {
    if (directionChoice !== 'auto') return directionChoice;
    const cc = map?.callCode;
    const info = frame?.info;
    // a response sets the map's response bits in the call code (the built-in sets 0x80)
    if (cc && cc.responseMask && info && info.length > cc.offset && (info[cc.offset] & cc.responseMask & 0xff) !== 0) return 'response';
    return 'request';
  }, [directionChoice, map, frame]);

  const call = useMemo(() => (map && frame ? applyFieldMap(map, frame.info, direction) : null), [map, frame, direction]);

  // octet index of the whole frame → field index
  const owner = useMemo(() => {
    const out = new Map<number, number>();
    if (!call || !frame) return out;
    call.fields.forEach((f, i) => {
      for (let k = 0; k < f.available; k++) out.set(frame!.infoOffset + f.offset + k, i);
    });
    return out;
  }, [call, frame]);
  const layoutIndex = map && call?.layout ? map.layouts.findIndex((l) => l.id === call.layout) : -1;
  const fieldIndexInLayout = (id: string) => (layoutIndex >= 0 ? map!.layouts[layoutIndex].fields.findIndex((f) => f.id === id) : -1);

  return (
    <section aria-label="Preview" className="space-y-3">
      {(frame && call) || list.data?.empty ? <span hidden data-testid="preview-ready" /> : null}
      <div className="flex flex-wrap items-end gap-3">
        <label className="text-sm font-medium">
          Capture{' '}
          <select aria-label="Preview capture" className={control} value={capture ?? ''} onChange={(e) => onPick(e.target.value ? Number(e.target.value) : null, null)}>
            {list.data && list.data.captures.length === 0 ? <option value="">no decoded capture</option> : null}
            {capture !== null && list.data && !list.data.captures.some((c) => c.id === capture) ? <option value={capture}>capture id {capture}</option> : null}
            {(list.data?.captures ?? []).map((c) => (
              <option key={c.id} value={c.id}>
                {c.name}
              </option>
            ))}
          </select>
        </label>
        <label className="text-sm font-medium">
          Frame{' '}
          <select aria-label="Preview frame" className={control} value={frameChoice ?? ''} onChange={(e) => onPick(capture, e.target.value ? Number(e.target.value) : null)}>
            {frameChoice !== null && !frames?.some((f) => f.id === frameChoice) ? <option value={frameChoice}>frame id {frameChoice}</option> : null}
            {(frames ?? []).map((f) => (
              <option key={f.id} value={f.id}>
                {f.link} #{f.seq} · {f.infoLength} octets · {f.summary}
              </option>
            ))}
          </select>
        </label>
        <form
          className="flex items-end gap-1"
          onSubmit={(e) => {
            e.preventDefault();
            const id = Number(typedId);
            if (Number.isInteger(id) && id > 0) onPick(capture, id);
          }}
        >
          <label className="text-sm font-medium">
            or frame id <input aria-label="Preview frame id" className={`${control} w-24`} inputMode="numeric" value={typedId} onChange={(e) => setTypedId(e.target.value)} />
          </label>
          <button type="submit" className={`${control} hover:bg-raised`}>
            Show
          </button>
        </form>
        <label className="text-sm font-medium">
          Read as{' '}
          <select aria-label="Preview direction" className={control} value={directionChoice} onChange={(e) => setDirectionChoice(e.target.value as 'auto' | CallDirection)}>
            <option value="auto">auto ({direction})</option>
            <option value="request">request</option>
            <option value="response">response</option>
          </select>
        </label>
      </div>
      {list.error ? <ErrorNotice error={list.error} /> : null}
      {asked.error ? <ErrorNotice error={asked.error} /> : null}
      {!draftValid ? <p className="text-sm text-flare-700">The draft has problems; the preview shows the last valid draft.</p> : null}
      {list.data?.empty && !shown ? <EmptyPreview rigId={rigId} captureId={capture} empty={list.data.empty} /> : null}
      {frame && call ? (
        <div className="grid gap-4 lg:grid-cols-[minmax(0,1fr)_minmax(0,1fr)]">
          <div>
            <p className="mb-1 text-xs text-muted">
              Frame {frame.frame.id} · {frame.frame.link} #{frame.frame.seq} · information field from octet {frame.infoOffset} · layout{' '}
              <span className="font-mono">{call.layout ?? 'none matched'}</span>
              {layoutIndex >= 0 ? (
                <button type="button" className="ml-2 text-link hover:underline" onClick={() => onShowLayout(layoutIndex)}>
                  Show this layout
                </button>
              ) : null}
            </p>
            <div aria-label="Preview octets" className="flex flex-wrap gap-x-0.5 gap-y-1 font-mono text-xs">
              {Array.from(frame.bytes, (b, k) => {
                const f = owner.get(k);
                const outside = k < frame!.infoOffset || k >= frame!.infoOffset + frame!.info.length;
                const field = f !== undefined ? call.fields[f] : null;
                const colourIndex = field ? fieldIndexInLayout(field.id) : -1;
                return (
                  <span
                    key={k}
                    title={field ? `${field.id} (octet ${k})` : outside ? `octet ${k}: link header or FCS` : `octet ${k}: no field`}
                    data-field={field?.id}
                    className={`rounded px-0.5 ${field ? swatch(colourIndex >= 0 ? colourIndex : f!) : outside ? 'text-muted' : 'outline outline-1 outline-dashed outline-line'}`}
                  >
                    {hex2(b)}
                  </span>
                );
              })}
            </div>
            {call.unexplained ? <p className="mt-2 text-xs text-muted">{call.unexplained} octet(s) after the last field are not described.</p> : null}
            {call.problems.length ? (
              <ul className="mt-2 text-xs text-flare-700">
                {call.problems.map((p) => (
                  <li key={p}>{p}</li>
                ))}
              </ul>
            ) : null}
          </div>
          <table className="text-left text-sm" aria-label="Decoded values">
            <thead className="text-xs text-muted">
              <tr>
                <th className="px-2 py-1">Field</th>
                <th className="px-2 py-1">Octets</th>
                <th className="px-2 py-1">Value</th>
              </tr>
            </thead>
            <tbody className="divide-y divide-line">
              {call.fields.map((f, i) => (
                <tr key={`${f.id}-${i}`}>
                  <td className="px-2 py-1">
                    <span className={`mr-1 inline-block h-3 w-3 rounded-sm ${swatch(fieldIndexInLayout(f.id) >= 0 ? fieldIndexInLayout(f.id) : i)}`} aria-hidden="true" />
                    <span className="font-mono">{f.id}</span>
                  </td>
                  <td className="px-2 py-1 font-mono text-xs">
                    {frame!.infoOffset + f.offset}+{f.length}
                    {f.truncated ? ` (only ${f.available})` : ''}
                  </td>
                  <td className="break-all px-2 py-1 font-mono text-xs">{f.display}</td>
                </tr>
              ))}
            </tbody>
          </table>
        </div>
      ) : list.isPending || asked.isLoading ? (
        <p className="text-sm text-muted">Loading the frame…</p>
      ) : null}
    </section>
  );
}

/** Why there is no frame to preview, and the way to one. */
function EmptyPreview({ rigId, captureId, empty }: { rigId: number; captureId: number | null; empty: PreviewEmpty }) {
  const capturePage = captureId === null ? null : `/rigs/${rigId}/captures/${captureId}`;
  const fix =
    empty.reason === 'no-capture'
      ? { to: `/rigs/${rigId}/captures/new`, label: 'Upload a capture' }
      : empty.reason === 'not-decoded' && capturePage
        ? { to: `${capturePage}/setup`, label: 'Open its channel roles to decode it' }
        : capturePage
          ? { to: `${capturePage}/timeline`, label: 'Open its timeline to find a frame' }
          : null;
  return (
    <div role="status" data-testid="preview-empty" className="rounded border border-dashed border-line p-3 text-sm">
      <p>{empty.message}</p>
      {fix ? (
        <Link to={fix.to} className="mt-1 inline-block text-link hover:underline">
          {fix.label}
        </Link>
      ) : null}
    </div>
  );
}
