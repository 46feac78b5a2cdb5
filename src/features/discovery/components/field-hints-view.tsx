import { useState } from 'react';
import { Link, useNavigate } from 'react-router';
import { draftFieldMap } from '../../../../shared/decoder/hints';
import type { FieldHint, HintGroup } from '../../../../shared/decoder/hints';
import type { CaptureFieldHints, CaptureSummaryRow, RigDetail } from '../../../../shared/schemas';
import { Button } from '../../../components/button';
import { Card, CardTitle } from '../../../components/card';
import { SelectField, TextField } from '../../../components/field';
import { ErrorNotice } from '../../../components/notice';
import { isApiError } from '../../../lib/api';
import { canCapture } from '../../../lib/permissions';
import { useCreateFieldMap } from '../../../lib/create-field-map';
import { useFieldHints } from '../../../components/discovery/get-field-hints';
import { captureScope } from '../../../lib/scope';

const hex = (v: number) => `0x${v.toString(16).toUpperCase().padStart(2, '0')}`;
const kindWords: Record<FieldHint['kind'], string> = {
  constant: 'constant',
  'small-set': 'few values',
  counter: 'counter',
  echo: 'echo of the request',
  length: 'length',
  'cpm-name': 'CP/M file name',
  record: '128-octet record',
  'record-number': 'record number',
  text: 'text',
};

/** The field-hints view of a capture: statistics by octet offset per direction and selector value, and a draft map from them. */
export function FieldHintsView({ rig, capture }: { rig: RigDetail; capture: CaptureSummaryRow }) {
  const [selector, setSelector] = useState<number | 'none'>(0);
  const hints = useFieldHints(rig.id, capture.id, selector);
  return (
    <div className="space-y-5">
      <Card>
        <CardTitle>Field hints</CardTitle>
        <p className="mb-3 text-sm text-muted">
          Statistics across the good information frames, by octet offset, for requests (station → server) and answers (server → station), and for each value of a
          selector octet (by default the first: a call code, as far as anyone knows yet). Each hint has a confidence and links to the frames behind it.
        </p>
        <SelectField
          label="Selector octet"
          value={String(selector)}
          onChange={(e) => setSelector(e.target.value === 'none' ? 'none' : Number(e.target.value))}
          options={[{ value: 'none', label: 'None: all frames of a direction together' }, ...Array.from({ length: 8 }, (_, i) => ({ value: String(i), label: `Octet ${i} of the information field` }))]}
          wrapperClassName="max-w-sm"
        />
      </Card>
      {hints.isPending ? <p className="text-sm text-muted">Counting…</p> : null}
      {hints.error ? <ErrorNotice error={hints.error} /> : null}
      {hints.data ? <HintReportView rig={rig} capture={capture} data={hints.data} selector={selector} /> : null}
    </div>
  );
}

function HintReportView({ rig, capture, data, selector }: { rig: RigDetail; capture: CaptureSummaryRow; data: CaptureFieldHints; selector: number | 'none' }) {
  const r = data.report;
  const base = captureScope(rig.id, capture.id).page;
  const frameLink = (ref: { link: string; seq: number }) => {
    const id = data.frameIds[`${ref.link}:${ref.seq}`];
    return id === undefined ? null : `${base}/frames/${id}`;
  };
  return (
    <>
      <Card>
        <p className="text-sm" data-testid="hint-counts">
          {r.frames} frames: {r.requests} requests, {r.responses} answers, {r.pairs} request–answer pairs
          {r.responseMask ? ` · answers set ${hex(r.responseMask)} in the selector (a response bit)` : ''}
          {data.limited ? ` · the first ${data.frameLimit} frames only` : ''}.
        </p>
        {[...r.notes, ...data.skippedLinks.map((s) => `${s.link}: ${s.why}`)].map((n) => (
          <p key={n} className="mt-1 text-sm text-muted">
            {n}
          </p>
        ))}
        {r.frames === 0 ? (
          <p className="mt-2 text-sm">
            No frame could be counted.{' '}
            <Link to={`${base}/setup`} className="text-link hover:underline">
              Set the link directions in the channel roles
            </Link>{' '}
            and decode again.
          </p>
        ) : null}
        {selector !== 'none' && r.frames > 0 ? <StartMap rig={rig} capture={capture} data={data} /> : null}
      </Card>
      {r.calls.length ? (
        <Card>
          <CardTitle>Selector values</CardTitle>
          <table className="w-full text-sm" aria-label="Selector values">
            <thead className="text-left text-xs text-muted">
              <tr>
                <th className="py-1">Value</th>
                <th>Requests</th>
                <th>Answers</th>
                <th>Answered with</th>
                <th>Looks like</th>
              </tr>
            </thead>
            <tbody>
              {r.calls.map((c) => (
                <tr key={c.selector} className="border-t border-line/60 align-top">
                  <td className="py-1 font-mono">{hex(c.selector)}</td>
                  <td className="font-mono">{c.requests}</td>
                  <td className="font-mono">{c.responses}</td>
                  <td className="font-mono">{c.answerSelector === null ? '—' : hex(c.answerSelector)}</td>
                  <td>
                    {c.file ?? '—'} <span className="text-xs text-muted">{c.why}</span>
                  </td>
                </tr>
              ))}
            </tbody>
          </table>
        </Card>
      ) : null}
      {r.groups.map((g) => (
        <GroupCard key={`${g.direction}:${g.selector ?? 'all'}`} g={g} frameLink={frameLink} />
      ))}
    </>
  );
}

export function GroupCard({ g, frameLink }: { g: HintGroup; frameLink: (ref: { link: string; seq: number }) => string | null }) {
  const title = `${g.direction === 'request' ? 'Requests' : 'Answers'}${g.selector === null ? ', every frame' : `, selector ${hex(g.selector)}`}`;
  return (
    <Card>
      <CardTitle aside={<span className="text-xs text-muted">{g.frames} frames · lengths {g.lengths.map((l) => `${l.length}×${l.count}`).join(', ')}</span>}>{title}</CardTitle>
      {g.hints.length === 0 ? (
        <p className="text-sm text-muted">No offset behaves like a field across these frames.</p>
      ) : (
        <table className="w-full text-sm" aria-label={`Hints: ${title}`}>
          <thead className="text-left text-xs text-muted">
            <tr>
              <th className="py-1">Offset</th>
              <th>Octets</th>
              <th>Hint</th>
              <th>Confidence</th>
              <th>What was seen</th>
              <th>Frames</th>
            </tr>
          </thead>
          <tbody>
            {g.hints.map((h) => (
              <tr key={h.id} className="border-t border-line/60 align-top">
                <td className="py-1 font-mono">{h.offset}</td>
                <td className="font-mono">{h.length}</td>
                <td>
                  {kindWords[h.kind]}
                  {h.role ? <span className="block text-xs text-muted">role {h.role}</span> : null}
                </td>
                <td className="font-mono">{Math.round(h.confidence * 100)} %</td>
                <td className="max-w-md">{h.summary}</td>
                <td className="text-xs">
                  <FrameLinks label="for" count={h.support} refs={h.supporting} frameLink={frameLink} />
                  <FrameLinks label="against" count={h.contradict} refs={h.contradicting} frameLink={frameLink} />
                </td>
              </tr>
            ))}
          </tbody>
        </table>
      )}
    </Card>
  );
}

function FrameLinks({ label, count, refs, frameLink }: { label: string; count: number; refs: { link: string; seq: number }[]; frameLink: (ref: { link: string; seq: number }) => string | null }) {
  if (count === 0) return <span className="block text-muted">{label}: none</span>;
  return (
    <span className="block">
      {label} {count}:{' '}
      {refs.slice(0, 3).map((ref) => {
        const to = frameLink(ref);
        return to ? (
          <Link key={`${ref.link}:${ref.seq}`} to={to} className="mr-1 font-mono text-link hover:underline">
            {ref.link}#{ref.seq}
          </Link>
        ) : null;
      })}
    </span>
  );
}

function StartMap({ rig, capture, data }: { rig: RigDetail; capture: CaptureSummaryRow; data: CaptureFieldHints }) {
  const [name, setName] = useState(`${capture.name.replace(/\.[^.]+$/, '')}, from hints`.slice(0, 100));
  const create = useCreateFieldMap(rig.id);
  const navigate = useNavigate();
  if (!canCapture.decode(rig.myRole)) return null;
  return (
    <div className="mt-4 flex flex-wrap items-end gap-3 border-t border-line/60 pt-3">
      <TextField label="Name of the new map" value={name} onChange={(e) => setName(e.target.value)} wrapperClassName="min-w-72" />
      <Button
        busy={create.isPending}
        onClick={() =>
          create.mutate(
            { name: name.trim() || 'From hints', document: draftFieldMap(data.report, { name: name.trim() || 'From hints' }) },
            { onSuccess: (map) => navigate(`/rigs/${rig.id}/field-maps/${map.id}?capture=${capture.id}`) },
          )
        }
      >
        Start a field map from these hints
      </Button>
      {create.error ? <ErrorNotice error={create.error}>{isApiError(create.error, 400) ? `The draft did not validate: ${create.error.message}` : undefined}</ErrorNotice> : null}
    </div>
  );
}
