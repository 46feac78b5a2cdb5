import type { FrameCall, FrameCallField } from '../../../../shared/schemas';
import { formatAddress, plural } from '../../../lib/format';

/** octets 4–11, or octet 4 */
export function octetRange(f: Pick<FrameCallField, 'frameOffset' | 'available'>): string {
  if (f.available <= 0) return '—';
  return f.available === 1 ? String(f.frameOffset) : `${f.frameOffset}–${f.frameOffset + f.available - 1}`;
}

/** What the value means: its value name, the field's meaning, the bit fields and file attributes. */
function meaningOf(f: FrameCallField): string[] {
  const out: string[] = [];
  if (f.valueName) out.push(f.valueName);
  if (f.bits) out.push(f.bits.map((b) => `${b.name} ${b.value}${b.valueName ? ` (${b.valueName})` : ''}`).join(', '));
  if (f.attributes) {
    const set = Object.entries(f.attributes).filter(([, on]) => on).map(([name]) => name);
    out.push(set.length ? `attributes: ${set.join(', ')}` : 'no attributes set');
  }
  if (f.meaning) out.push(f.meaning);
  if (f.truncated) out.push(`cut short: ${plural(f.available, 'octet')} of ${f.length} present`);
  return out;
}

function heading(call: NonNullable<FrameCall['call']>): string {
  const parts = [call.direction === 'request' ? 'Request' : 'Answer'];
  parts.push(call.callName ?? (call.callCode === null ? 'unknown call' : `call ${call.callCode}`));
  if (call.callCode !== null) parts[1] += ` (${formatAddress(call.callCode)})`;
  if (call.tag !== null) parts.push(`tag ${call.tag}`);
  if (call.fileName) parts.push(call.fileName);
  if (call.recordNumber !== null) parts.push(`record ${call.recordNumber}`);
  if (call.status !== null) parts.push(`status ${formatAddress(call.status)}${call.statusMeaning ? ` ${call.statusMeaning}` : ''}`);
  return parts.join(' · ');
}

interface Props {
  decoded: FrameCall;
  activeField: number | null;
  onField: (index: number | null) => void;
}

/**
 * The call layer of one frame: what the field map reads in its information field, field by field,
 * with the octets each takes (pointing at a row shades them in the hex view) and the problems found.
 */
export function CallDecode({ decoded, activeField, onField }: Props) {
  const call = decoded.call;
  if (!call) return <p className="text-sm text-muted" data-testid="call-reason">No call in this frame: {decoded.reason ?? 'the field map reads none'}.</p>;
  const problems = [...call.problems];
  if (call.unexplained > 0) problems.push(`${plural(call.unexplained, 'octet')} at the end that no field of the layout explains`);
  return (
    <div className="space-y-3 text-sm" data-testid="call-decode">
      <p className="font-medium">{heading(call)}</p>
      {problems.length > 0 ? (
        <ul aria-label="Problems" className="list-disc space-y-0.5 rounded-md border border-flare-500/50 bg-flare-500/8 py-2 pl-7 pr-3 text-flare-700 dark:text-flare-300">
          {problems.map((p) => (
            <li key={p}>{p}</li>
          ))}
        </ul>
      ) : null}
      <div className="overflow-x-auto">
        <table className="w-full text-sm" aria-label="Call fields">
          <thead>
            <tr className="border-b border-line text-left text-xs uppercase tracking-wide text-muted">
              <th className="py-1.5 pr-3 font-medium">Field</th>
              <th className="py-1.5 pr-3 font-medium">Octets</th>
              <th className="py-1.5 pr-3 font-medium">Value</th>
              <th className="py-1.5 font-medium">Meaning</th>
            </tr>
          </thead>
          <tbody onMouseLeave={() => onField(null)}>
            {call.fields.map((f, i) => (
              <tr
                key={`${f.id}-${i}`}
                tabIndex={0}
                data-testid="call-field"
                data-active={activeField === i || undefined}
                aria-label={`${f.name}, octets ${octetRange(f)}`}
                onMouseEnter={() => onField(i)}
                onFocus={() => onField(i)}
                onBlur={() => onField(null)}
                className={`border-b border-line/60 align-top last:border-0 focus:outline-none focus-visible:ring-2 focus-visible:ring-focus/60 ${activeField === i ? 'bg-flare-500/15' : ''}`}
              >
                <td className="py-1 pr-3">
                  <span className="font-medium">{f.name}</span>
                  {f.role ? <span className="ml-1.5 rounded border border-line px-1 text-[10.5px] text-muted">{f.role}</span> : null}
                  <span className="block font-mono text-[11px] text-muted">
                    {f.id} · {f.type}
                  </span>
                </td>
                <td className="py-1 pr-3 font-mono text-xs whitespace-nowrap">{octetRange(f)}</td>
                <td className="max-w-72 py-1 pr-3 font-mono text-xs break-all">{f.display}</td>
                <td className="py-1 text-xs">{meaningOf(f).join(' · ') || <span className="text-muted">—</span>}</td>
              </tr>
            ))}
          </tbody>
        </table>
      </div>
      <p className="text-xs text-muted">
        Read with the field map “{decoded.map.name}”, version {decoded.map.version}; octets are counted from the address octet, as in the hex view.
      </p>
    </div>
  );
}
