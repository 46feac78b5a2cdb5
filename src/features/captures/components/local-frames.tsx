import { formatSeconds } from '../../../components/units';
import type { PreviewFrame } from '../local-decode/messages';

const statusWords: Record<string, string> = { ok: 'good', 'bad-fcs': 'bad FCS', abort: 'aborted', short: 'short', residue: 'residue bits' };

/** The first frames of a decode running in this tab, as they arrive. */
export function LocalFrames({ frames }: { frames: PreviewFrame[] }) {
  if (frames.length === 0) return null;
  return (
    <div className="overflow-x-auto rounded-md border border-line">
      <table className="w-full text-left text-xs" aria-label="First frames decoded here">
        <thead className="bg-raised text-muted">
          <tr>
            <th className="px-2 py-1 font-medium">Time</th>
            <th className="px-2 py-1 font-medium">Link</th>
            <th className="px-2 py-1 font-medium">FCS</th>
            <th className="px-2 py-1 font-medium">Frame</th>
            <th className="px-2 py-1 font-medium">Octets</th>
          </tr>
        </thead>
        <tbody>
          {frames.map((f) => (
            <tr key={`${f.link}:${f.seq}`} className="border-t border-line" data-testid="local-frame">
              <td className="px-2 py-0.5 font-mono whitespace-nowrap">{formatSeconds(f.seconds)}</td>
              <td className="px-2 py-0.5 font-mono">{f.link}</td>
              <td className={`px-2 py-0.5 ${f.status === 'ok' ? '' : 'text-danger'}`}>{statusWords[f.status] ?? f.status}</td>
              <td className="px-2 py-0.5">{f.summary}</td>
              <td className="px-2 py-0.5 font-mono text-muted">{f.hex}</td>
            </tr>
          ))}
        </tbody>
      </table>
    </div>
  );
}

export { statusWords };
