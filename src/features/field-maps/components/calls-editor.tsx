import { FILE_CALL_KINDS, type FieldMapInput } from '../../../../shared/decoder/calls';
import { Button } from '../../../components/button';
import { errorAt, type ErrorsByPath } from './draft-errors';

type CallIn = NonNullable<FieldMapInput['calls']>[number];

const input = 'w-full rounded border bg-surface px-1.5 py-1 text-sm focus:outline-none focus:ring-2 focus:ring-focus/60';
const border = (error?: string) => (error ? 'border-danger' : 'border-line');
const kindWords: Record<(typeof FILE_CALL_KINDS)[number], string> = {
  open: 'opens a file',
  make: 'creates a file',
  close: 'closes a file',
  'read-sequential': 'reads the next record',
  'write-sequential': 'writes the next record',
  'read-random': 'reads a numbered record',
  'write-random': 'writes a numbered record',
  'boot-load': 'loads a boot image',
  'compute-size': 'answers the file size',
  lock: 'locks a record',
  unlock: 'unlocks a record',
};

/**
 * The map's calls: code, name and what each does to a file (recovered files follow these; a map
 * that names no file call gets the CP/M BDOS numbers).
 */
export function CallsEditor({ doc, errors, editable, onChange }: { doc: FieldMapInput; errors: ErrorsByPath; editable: boolean; onChange: (doc: FieldMapInput) => void }) {
  const calls = doc.calls ?? [];
  const set = (i: number, patch: Partial<CallIn>) => onChange({ ...doc, calls: calls.map((c, k) => (k === i ? { ...c, ...patch } : c)) });
  const err = (i: number, p: string) => errorAt(errors, `calls[${i}].${p}`);
  if (!editable && calls.length === 0) return <p className="text-sm text-muted">No calls named: calls are shown by their code, and files follow the CP/M BDOS numbers.</p>;
  if (!editable) return <CallsTable calls={calls} />;
  return (
    <div className="space-y-2">
      <table className="w-full text-sm" aria-label="Calls">
        <thead className="text-left text-xs text-muted">
          <tr>
            <th className="px-1">Code</th>
            <th className="px-1">Name</th>
            <th className="px-1">What it does to a file</th>
            <th className="px-1">Meaning</th>
            <th />
          </tr>
        </thead>
        <tbody>
          {calls.map((c, i) => (
            <tr key={i} className="border-t border-line align-top">
              <td className="w-24 px-1 py-1">
                <input aria-label={`Call ${i + 1} code`} type="number" min={0} className={`${input} ${border(err(i, 'code'))} font-mono`} value={c.code} onChange={(e) => set(i, { code: Number(e.target.value) || 0 })} />
              </td>
              <td className="px-1 py-1">
                <input aria-label={`Call ${i + 1} name`} className={`${input} ${border(err(i, 'name'))}`} value={c.name} onChange={(e) => set(i, { name: e.target.value })} />
              </td>
              <td className="px-1 py-1">
                <select aria-label={`Call ${i + 1} file kind`} className={`${input} ${border(err(i, 'file'))}`} value={c.file ?? ''} onChange={(e) => set(i, { file: (e.target.value || undefined) as CallIn['file'] })}>
                  <option value="">nothing (not a file call)</option>
                  {FILE_CALL_KINDS.map((k) => (
                    <option key={k} value={k}>
                      {kindWords[k]}
                    </option>
                  ))}
                </select>
              </td>
              <td className="px-1 py-1">
                <input aria-label={`Call ${i + 1} meaning`} className={`${input} border-line`} value={c.meaning ?? ''} onChange={(e) => set(i, { meaning: e.target.value || undefined })} />
              </td>
              <td className="px-1 py-1">
                <Button variant="dangerGhost" aria-label={`Remove call ${i + 1}`} onClick={() => onChange({ ...doc, calls: calls.filter((_, k) => k !== i) })}>
                  ×
                </Button>
              </td>
            </tr>
          ))}
        </tbody>
      </table>
      <Button variant="secondary" onClick={() => onChange({ ...doc, calls: [...calls, { code: calls.reduce((m, c) => Math.max(m, c.code + 1), 0), name: 'new call' }] })}>
        Add a call
      </Button>
    </div>
  );
}

/** The calls read-only (viewers, the built-in map): text, whole, where disabled inputs would cut it. */
function CallsTable({ calls }: { calls: CallIn[] }) {
  return (
    <table className="w-full text-left text-sm" aria-label="Calls">
      <thead className="text-xs text-muted">
        <tr>
          <th className="px-2 py-1">Code</th>
          <th className="px-2 py-1">Name</th>
          <th className="px-2 py-1">What it does to a file</th>
          <th className="px-2 py-1">Meaning</th>
        </tr>
      </thead>
      <tbody className="divide-y divide-line">
        {calls.map((c, i) => (
          <tr key={i} className="align-top">
            <td className="px-2 py-1 font-mono">{c.code}</td>
            <td className="px-2 py-1">{c.name}</td>
            <td className="px-2 py-1">{c.file ? kindWords[c.file] : <span className="text-muted">nothing (not a file call)</span>}</td>
            <td className="px-2 py-1">{c.meaning}</td>
          </tr>
        ))}
      </tbody>
    </table>
  );
}
