import type { FieldMapInput } from '../../../../shared/decoder/calls';
import { errorAt, type ErrorsByPath } from './draft-errors';

type CallCode = NonNullable<FieldMapInput['callCode']>;

const input = 'mt-1 block w-full rounded border bg-surface px-2 py-1 text-sm font-normal focus:outline-none focus:ring-2 focus:ring-focus/60';
const border = (error?: string) => (error ? 'border-danger' : 'border-line');

/** The map's description and where the call code sits (which picks layouts by call). */
export function MapSettings({ doc, errors, editable, onChange }: { doc: FieldMapInput; errors: ErrorsByPath; editable: boolean; onChange: (doc: FieldMapInput) => void }) {
  const cc = doc.callCode;
  const setCallCode = (patch: Partial<CallCode> | null) => {
    const next = { ...doc };
    if (patch === null) delete next.callCode;
    else next.callCode = { offset: 0, type: 'u8', ...cc, ...patch };
    onChange(next);
  };
  if (!editable) {
    return (
      <div className="space-y-1 text-sm">
        {doc.description ? <p className="max-w-3xl whitespace-pre-line">{doc.description}</p> : null}
        <p className="text-muted">
          {cc
            ? `Call code: ${cc.type} at octet ${cc.offset} of the information field${cc.responseMask ? `; responses set 0x${cc.responseMask.toString(16).toUpperCase()}` : ''}.`
            : 'No call code: layouts are chosen by direction only.'}
        </p>
      </div>
    );
  }
  const err = (p: string) => errorAt(errors, p);
  return (
    <div className="grid gap-3 md:grid-cols-[minmax(0,2fr)_minmax(0,1fr)]">
      <label className="text-sm font-medium">
        Description
        <textarea rows={3} className={`${input} ${border(err('description'))}`} value={doc.description ?? ''} onChange={(e) => onChange({ ...doc, description: e.target.value || undefined })} />
        {err('description') ? <span className="text-sm font-normal text-danger">{err('description')}</span> : null}
      </label>
      <fieldset className="space-y-2 text-sm">
        <legend className="font-medium">Call code</legend>
        <label className="flex items-center gap-2">
          <input type="checkbox" checked={cc !== undefined} onChange={(e) => setCallCode(e.target.checked ? {} : null)} /> read a call code to choose layouts
        </label>
        {cc ? (
          <div className="grid grid-cols-3 gap-2">
            <label>
              Octet
              <input type="number" min={0} className={`${input} ${border(err('callCode.offset'))}`} value={cc.offset} onChange={(e) => setCallCode({ offset: Number(e.target.value) || 0 })} />
            </label>
            <label>
              Type
              <select className={`${input} ${border(err('callCode.type'))}`} value={cc.type} onChange={(e) => setCallCode({ type: e.target.value as CallCode['type'] })}>
                <option>u8</option>
                <option>u16le</option>
                <option>u16be</option>
              </select>
            </label>
            <label title="bits a response sets in the call code (cleared before choosing a layout)">
              Response bits
              <input
                className={`${input} ${border(err('callCode.responseMask'))} font-mono`}
                defaultValue={cc.responseMask ? `0x${cc.responseMask.toString(16).toUpperCase()}` : '0'}
                onChange={(e) => {
                  const t = e.target.value.trim();
                  const v = /^0x[0-9a-f]+$/i.test(t) ? parseInt(t.slice(2), 16) : /^\d+$/.test(t) ? Number(t) : NaN;
                  setCallCode({ responseMask: Number.isNaN(v) ? -1 : v });
                }}
              />
            </label>
          </div>
        ) : null}
        {err('callCode') ? <p className="text-danger">{err('callCode')}</p> : null}
      </fieldset>
    </div>
  );
}
