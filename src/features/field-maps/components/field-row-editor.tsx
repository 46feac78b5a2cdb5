import { useState, type ReactNode } from 'react';
import { FIELD_ROLES, FIELD_TYPES, FIXED_SIZE } from '../../../../shared/decoder/calls';
import { Button } from '../../../components/button';
import { errorAt, errorsUnder, type ErrorsByPath } from './draft-errors';
import type { FieldIn } from './draft-ops';
import { swatch } from './field-colours';
import { textToValueNames, valueNamesToText } from './value-names-text';

const input = 'w-full rounded border bg-surface px-1.5 py-1 text-sm focus:outline-none focus:ring-2 focus:ring-focus/60';
const border = (error?: string) => (error ? 'border-danger' : 'border-line');

interface Props {
  field: FieldIn;
  index: number;
  count: number;
  /** ids of the fields before this one (for "after" and "length from") */
  earlier: string[];
  path: string;
  errors: ErrorsByPath;
  onChange: (patch: Partial<FieldIn>) => void;
  onMove: (by: -1 | 1) => void;
  onRemove: () => void;
  /** the field's notes toggle, shown under its controls */
  notes?: ReactNode;
}

type OffsetMode = 'follows' | 'fixed' | 'after';
type LengthMode = 'type' | 'fixed' | 'rest' | 'field';

/** One field of a layout as a table row of controls, with its validation messages under it. */
export function FieldRowEditor({ field, index, count, earlier, path, errors, onChange, onMove, onRemove, notes }: Props) {
  const n = index + 1;
  const err = (p: string) => errorAt(errors, `${path}.${p}`);
  const offsetMode: OffsetMode = field.offset === undefined ? 'follows' : typeof field.offset === 'number' ? 'fixed' : 'after';
  const lengthMode: LengthMode =
    field.length === undefined ? 'type' : typeof field.length === 'number' ? 'fixed' : field.length === 'rest' ? 'rest' : 'field';
  const [valuesText, setValuesText] = useState(() => valueNamesToText(field.values));
  const [bitsText, setBitsText] = useState(() => (field.bits ? JSON.stringify(field.bits, null, 1) : ''));
  const [bitsError, setBitsError] = useState<string | null>(null);
  const messages = errorsUnder(errors, path);
  const fixedSize = FIXED_SIZE[field.type];

  const setOffsetMode = (mode: OffsetMode) =>
    onChange({ offset: mode === 'follows' ? undefined : mode === 'fixed' ? 0 : { after: earlier[earlier.length - 1] ?? '' } });
  const setLengthMode = (mode: LengthMode) =>
    onChange({
      length: mode === 'type' ? undefined : mode === 'fixed' ? (fixedSize ?? 1) : mode === 'rest' ? 'rest' : { field: earlier[earlier.length - 1] ?? '', add: 0 },
    });

  return (
    <>
      <tr className="border-t border-line align-top">
        <td className="px-1 py-1.5">
          <span className={`inline-block h-3 w-3 rounded-sm ${swatch(index)}`} aria-hidden="true" /> <span className="font-mono text-xs">{n}</span>
        </td>
        <td className="px-1 py-1.5">
          <input aria-label={`Field ${n} id`} className={`${input} ${border(err('id'))} font-mono`} value={field.id} onChange={(e) => onChange({ id: e.target.value })} aria-invalid={err('id') ? true : undefined} />
        </td>
        <td className="px-1 py-1.5">
          <input aria-label={`Field ${n} name`} className={`${input} ${border(err('name'))}`} value={field.name ?? ''} onChange={(e) => onChange({ name: e.target.value || undefined })} />
        </td>
        <td className="space-y-1 px-1 py-1.5">
          <select aria-label={`Field ${n} offset`} className={`${input} ${border(err('offset'))}`} value={offsetMode} onChange={(e) => setOffsetMode(e.target.value as OffsetMode)}>
            <option value="follows">follows the previous</option>
            <option value="fixed">at octet</option>
            <option value="after" disabled={earlier.length === 0}>
              after field
            </option>
          </select>
          {typeof field.offset === 'number' ? (
            <input aria-label={`Field ${n} offset octet`} type="number" min={0} className={`${input} ${border(err('offset'))}`} value={field.offset} onChange={(e) => onChange({ offset: Number(e.target.value) || 0 })} />
          ) : typeof field.offset === 'object' ? (
            <select aria-label={`Field ${n} offset after`} className={`${input} ${border(err('offset'))}`} value={field.offset.after} onChange={(e) => onChange({ offset: { after: e.target.value } })}>
              {[...new Set([field.offset.after, ...earlier])].map((id) => (
                <option key={id} value={id}>
                  {id || '(choose)'}
                </option>
              ))}
            </select>
          ) : null}
        </td>
        <td className="space-y-1 px-1 py-1.5">
          <select aria-label={`Field ${n} length`} className={`${input} ${border(err('length'))}`} value={lengthMode} onChange={(e) => setLengthMode(e.target.value as LengthMode)}>
            <option value="type">{fixedSize !== undefined ? `the type's ${fixedSize}` : field.type === 'bits' ? 'the type’s 1' : 'not set'}</option>
            <option value="fixed">octets</option>
            <option value="rest">rest of frame</option>
            <option value="field" disabled={earlier.length === 0}>
              value of field
            </option>
          </select>
          {typeof field.length === 'number' ? (
            <input aria-label={`Field ${n} length octets`} type="number" min={0} className={`${input} ${border(err('length'))}`} value={field.length} onChange={(e) => onChange({ length: Number(e.target.value) || 0 })} />
          ) : typeof field.length === 'object' ? (
            <div className="flex gap-1">
              <select aria-label={`Field ${n} length field`} className={`${input} ${border(err('length'))}`} value={field.length.field} onChange={(e) => onChange({ length: { field: e.target.value, add: (field.length as { add?: number }).add ?? 0 } })}>
                {[...new Set([field.length.field, ...earlier])].map((id) => (
                  <option key={id} value={id}>
                    {id || '(choose)'}
                  </option>
                ))}
              </select>
              <input aria-label={`Field ${n} length add`} title="octets added to the value" type="number" className={`${input} ${border(err('length'))} w-14`} value={field.length.add ?? 0} onChange={(e) => onChange({ length: { field: (field.length as { field: string }).field, add: Number(e.target.value) || 0 } })} />
            </div>
          ) : null}
        </td>
        <td className="px-1 py-1.5">
          <select aria-label={`Field ${n} type`} className={`${input} ${border(err('type'))}`} value={field.type} onChange={(e) => onChange({ type: e.target.value as FieldIn['type'] })}>
            {FIELD_TYPES.map((t) => (
              <option key={t}>{t}</option>
            ))}
          </select>
        </td>
        <td className="px-1 py-1.5">
          <select aria-label={`Field ${n} role`} className={`${input} ${border(err('role'))}`} value={field.role ?? ''} onChange={(e) => onChange({ role: (e.target.value || undefined) as FieldIn['role'] })}>
            <option value="">none</option>
            {FIELD_ROLES.map((r) => (
              <option key={r}>{r}</option>
            ))}
          </select>
        </td>
        <td className="whitespace-nowrap px-1 py-1.5">
          <Button variant="ghost" className="px-1.5" aria-label={`Move field ${n} up`} disabled={index === 0} onClick={() => onMove(-1)}>
            ↑
          </Button>
          <Button variant="ghost" className="px-1.5" aria-label={`Move field ${n} down`} disabled={index === count - 1} onClick={() => onMove(1)}>
            ↓
          </Button>
          <Button variant="dangerGhost" className="px-1.5" aria-label={`Delete field ${n}`} onClick={onRemove}>
            ✕
          </Button>
        </td>
      </tr>
      <tr className="align-top">
        <td />
        <td colSpan={4} className="px-1 pb-2">
          <label className="block text-xs text-muted">
            Meaning
            <textarea aria-label={`Field ${n} meaning`} rows={2} className={`${input} ${border(err('meaning'))}`} value={field.meaning ?? ''} onChange={(e) => onChange({ meaning: e.target.value || undefined })} />
          </label>
        </td>
        <td colSpan={3} className="px-1 pb-2">
          <label className="block text-xs text-muted">
            Value names (one “value = name” a line)
            <textarea
            aria-label={`Field ${n} value names`}
            rows={2}
            placeholder="0 = ok"
            className={`${input} ${border(err('values'))} font-mono text-xs`}
            value={valuesText}
            onChange={(e) => {
              setValuesText(e.target.value);
              onChange({ values: textToValueNames(e.target.value) });
            }}
          />
          </label>
        </td>
      </tr>
      {field.role === 'length' || field.lengthAdd !== undefined ? (
        <tr>
          <td />
          <td colSpan={7} className="px-1 pb-2">
            <label className="inline-block text-xs text-muted">
              The length value counts the octets after {field.id || 'this field'} plus
              <input
                aria-label={`Field ${n} length add`}
                type="number"
                className={`${input} ${border(err('lengthAdd'))} ml-2 inline-block w-24 font-mono`}
                value={field.lengthAdd ?? 0}
                onChange={(e) => onChange({ lengthAdd: Number(e.target.value) ? Number(e.target.value) : undefined })}
              />
            </label>
          </td>
        </tr>
      ) : null}
      {field.type === 'bits' || field.bits ? (
        <tr>
          <td />
          <td colSpan={7} className="px-1 pb-2">
            <label className="block text-xs text-muted">
              Bit fields of {field.id} (JSON list of {'{ "name", "shift", "width", "meaning", "values" }'})
              <textarea
                aria-label={`Field ${n} bit fields`}
                rows={3}
                className={`${input} ${border(bitsError ?? err('bits'))} font-mono text-xs`}
                value={bitsText}
                onChange={(e) => {
                  setBitsText(e.target.value);
                  if (!e.target.value.trim()) {
                    setBitsError(null);
                    onChange({ bits: undefined });
                    return;
                  }
                  try {
                    onChange({ bits: JSON.parse(e.target.value) as FieldIn['bits'] });
                    setBitsError(null);
                  } catch (cause) {
                    setBitsError(`not JSON: ${(cause as Error).message}`);
                  }
                }}
              />
            </label>
            {bitsError ? <p className="text-xs text-danger">{bitsError}</p> : null}
          </td>
        </tr>
      ) : null}
      {messages.length ? (
        <tr>
          <td />
          <td colSpan={7} className="px-1 pb-2">
            <ul className="text-sm text-danger" aria-label={`Problems of field ${n}`}>
              {messages.map((m) => (
                <li key={m.rest}>
                  {m.rest ? <span className="font-mono text-xs">{m.rest}: </span> : null}
                  {m.message}
                </li>
              ))}
            </ul>
          </td>
        </tr>
      ) : null}
      {notes ? (
        <tr>
          <td />
          <td colSpan={7} className="px-1 pb-2">
            {notes}
          </td>
        </tr>
      ) : null}
    </>
  );
}
