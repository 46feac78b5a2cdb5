import type { ReactNode } from 'react';
import type { FieldMapInput } from '../../../../shared/decoder/calls';
import { Button } from '../../../components/button';
import { errorAt, type ErrorsByPath } from './draft-errors';
import { addField, moveField, removeField, updateField, updateLayout, type LayoutIn } from './draft-ops';
import { FieldRowEditor } from './field-row-editor';

const input = 'w-full rounded border bg-surface px-2 py-1 text-sm focus:outline-none focus:ring-2 focus:ring-focus/60';
const border = (error?: string) => (error ? 'border-danger' : 'border-line');

interface Props {
  doc: FieldMapInput;
  li: number;
  errors: ErrorsByPath;
  /** remounts the rows (their local text) after a reorder, delete, import or reload */
  generation: number;
  onChange: (doc: FieldMapInput, structural?: boolean) => void;
  renderFieldNotes?: (fieldPath: string) => ReactNode;
}

function callsText(layout: LayoutIn): string {
  return layout.when?.calls?.join(', ') ?? '';
}

function parseCalls(text: string): number[] | undefined {
  const parts = text.split(/[\s,]+/).filter(Boolean);
  if (!parts.length) return undefined;
  return parts.map((p) => (/^0x/i.test(p) ? parseInt(p.slice(2), 16) : Number(p)));
}

/** One layout: when it applies, then its fields as a table of controls. */
export function LayoutEditor({ doc, li, errors, generation, onChange, renderFieldNotes }: Props) {
  const layout = doc.layouts[li];
  const path = `layouts[${li}]`;
  const err = (p: string) => errorAt(errors, `${path}.${p}`);
  const setWhen = (when: LayoutIn['when']) => {
    const clean = when && (when.calls || when.direction) ? when : undefined;
    onChange(updateLayout(doc, li, { when: clean }));
  };
  return (
    <div className="space-y-4">
      <div className="grid gap-3 sm:grid-cols-4">
        <label className="text-sm font-medium">
          Layout id
          <input className={`${input} ${border(err('id'))} font-mono`} value={layout.id} onChange={(e) => onChange(updateLayout(doc, li, { id: e.target.value }))} />
          {err('id') ? <span className="block text-sm font-normal text-danger">{err('id')}</span> : null}
        </label>
        <label className="text-sm font-medium">
          Layout name
          <input className={`${input} ${border(err('name'))}`} value={layout.name ?? ''} onChange={(e) => onChange(updateLayout(doc, li, { name: e.target.value || undefined }))} />
        </label>
        <label className="text-sm font-medium">
          Direction
          <select className={`${input} ${border(err('when.direction'))}`} value={layout.when?.direction ?? ''} onChange={(e) => setWhen({ ...layout.when, direction: (e.target.value || undefined) as 'request' | 'response' | undefined })}>
            <option value="">either</option>
            <option value="request">request (station → server)</option>
            <option value="response">response (server → station)</option>
          </select>
        </label>
        <label className="text-sm font-medium">
          Call codes
          <input
            key={`calls-${generation}`}
            className={`${input} ${border(err('when.calls'))} font-mono`}
            placeholder="any"
            defaultValue={callsText(layout)}
            onChange={(e) => setWhen({ ...layout.when, calls: parseCalls(e.target.value) })}
          />
          {err('when') ? <span className="block text-sm font-normal text-danger">{err('when')}</span> : null}
        </label>
      </div>
      {errors[`${path}.fields`] ? <p className="text-sm text-danger">{errors[`${path}.fields`]}</p> : null}
      <div className="overflow-x-auto">
        <table className="w-full min-w-[760px] text-left text-sm" aria-label={`Fields of ${layout.name ?? layout.id}`}>
          <thead className="text-xs text-muted">
            <tr>
              <th className="w-10 px-1 py-1">#</th>
              <th className="w-32 px-1 py-1">Id</th>
              <th className="px-1 py-1">Name</th>
              <th className="w-44 px-1 py-1">Offset</th>
              <th className="w-48 px-1 py-1">Length</th>
              <th className="w-28 px-1 py-1">Type</th>
              <th className="w-36 px-1 py-1">Role</th>
              <th className="w-28 px-1 py-1" />
            </tr>
          </thead>
          <tbody>
            {layout.fields.map((f, fi) => (
              <FieldRowEditor
                key={`${generation}-${fi}`}
                field={f}
                index={fi}
                count={layout.fields.length}
                earlier={layout.fields.slice(0, fi).map((x) => x.id)}
                path={`${path}.fields[${fi}]`}
                errors={errors}
                onChange={(patch) => onChange(updateField(doc, li, fi, patch))}
                onMove={(by) => onChange(moveField(doc, li, fi, by), true)}
                onRemove={() => onChange(removeField(doc, li, fi), true)}
                notes={renderFieldNotes?.(`${layout.id}.${f.id}`)}
              />
            ))}
          </tbody>
        </table>
      </div>
      <Button variant="secondary" onClick={() => onChange(addField(doc, li), true)}>
        Add a field
      </Button>
    </div>
  );
}
