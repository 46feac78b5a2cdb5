import { Fragment, type ReactNode } from 'react';
import type { FieldMapInput } from '../../../../shared/decoder/calls';
import { describeValue } from './field-map-diff';
import { swatch } from './field-colours';
import { valueNamesToText } from './value-names-text';

/** A layout read-only: for viewers and the built-in map. */
export function LayoutTable({ doc, li, renderFieldNotes }: { doc: FieldMapInput; li: number; renderFieldNotes?: (fieldPath: string) => ReactNode }) {
  const layout = doc.layouts[li];
  const when = [layout.when?.direction ? `${layout.when.direction}s` : null, layout.when?.calls ? `calls ${layout.when.calls.join(', ')}` : null].filter(Boolean);
  return (
    <div className="space-y-3">
      <p className="text-sm text-muted">
        <span className="font-mono">{layout.id}</span> · applies to {when.length ? when.join(', ') : 'every frame no earlier layout matched'}
      </p>
      <div className="overflow-x-auto">
        <table className="w-full text-left text-sm" aria-label={`Fields of ${layout.name ?? layout.id}`}>
          <thead className="text-xs text-muted">
            <tr>
              <th className="px-2 py-1">#</th>
              <th className="px-2 py-1">Id</th>
              <th className="px-2 py-1">Name</th>
              <th className="px-2 py-1">Offset</th>
              <th className="px-2 py-1">Length</th>
              <th className="px-2 py-1">Type</th>
              <th className="px-2 py-1">Role</th>
              <th className="px-2 py-1">Meaning</th>
              <th className="px-2 py-1">Value names</th>
            </tr>
          </thead>
          <tbody className="divide-y divide-line">
            {layout.fields.map((f, fi) => (
              <Fragment key={fi}>
                <tr className="align-top">
                  <td className="px-2 py-1.5">
                    <span className={`inline-block h-3 w-3 rounded-sm ${swatch(fi)}`} aria-hidden="true" /> {fi + 1}
                  </td>
                  <td className="px-2 py-1.5 font-mono">{f.id}</td>
                  <td className="px-2 py-1.5">{f.name ?? ''}</td>
                  <td className="px-2 py-1.5 font-mono text-xs">{f.offset === undefined ? 'follows' : typeof f.offset === 'number' ? f.offset : `after ${f.offset.after}`}</td>
                  <td className="px-2 py-1.5 font-mono text-xs">{f.length === undefined ? 'type' : describeValue(f.length, 'length')}</td>
                  <td className="px-2 py-1.5 font-mono text-xs">{f.type}</td>
                  <td className="px-2 py-1.5 text-xs">{f.role ?? ''}</td>
                  <td className="px-2 py-1.5 text-xs">{f.meaning ?? ''}</td>
                  <td className="whitespace-pre-line px-2 py-1.5 font-mono text-xs">{[valueNamesToText(f.values), f.bits ? f.bits.map((b) => `bit ${b.shift} ${b.name}`).join('\n') : ''].filter(Boolean).join('\n')}</td>
                </tr>
                {renderFieldNotes ? (
                  <tr>
                    <td />
                    <td colSpan={8} className="px-2 pb-2">
                      {renderFieldNotes(`${layout.id}.${f.id}`)}
                    </td>
                  </tr>
                ) : null}
              </Fragment>
            ))}
          </tbody>
        </table>
      </div>
    </div>
  );
}
