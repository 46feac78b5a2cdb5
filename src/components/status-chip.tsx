import type { TimelineFrame } from '../../shared/schemas';

type FrameStatus = TimelineFrame['status'];

/** Words first, colour second: every status reads the same without colour. */
export const frameStatusLabels: Record<FrameStatus, string> = {
  ok: 'ok',
  'bad-fcs': 'bad FCS',
  abort: 'aborted',
  short: 'short',
  residue: 'residue',
};

export const frameStatusHelp: Record<FrameStatus, string> = {
  ok: 'FCS checks out',
  'bad-fcs': 'the FCS does not match the octets',
  abort: 'the sender aborted the frame (seven or more 1s)',
  short: 'fewer octets than address, control and FCS',
  residue: 'the bit count is not a multiple of 8',
};

/** Our own status colours, shared by chips and charts (light, dark). */
export const frameStatusColours: Record<FrameStatus, string> = {
  ok: '#1f9e94',
  'bad-fcs': '#e0582f',
  abort: '#a33fb8',
  short: '#d98b1a',
  residue: '#4f6fd6',
};

const chip: Record<FrameStatus, string> = {
  ok: 'border-tide-500/40 text-tide-700 dark:text-tide-300',
  'bad-fcs': 'border-[#e0582f]/60 bg-[#e0582f]/12 text-[#a8381a] dark:text-[#ff9a78]',
  abort: 'border-[#a33fb8]/55 bg-[#a33fb8]/10 text-[#7d2890] dark:text-[#dc9ae9]',
  short: 'border-flare-600/55 bg-flare-500/12 text-flare-700 dark:text-flare-300',
  residue: 'border-[#4f6fd6]/55 bg-[#4f6fd6]/10 text-[#3450b0] dark:text-[#a9baf2]',
};

const mark: Record<FrameStatus, string> = { ok: '✓', 'bad-fcs': '✕', abort: '⊘', short: '…', residue: '±' };

export function StatusChip({ status }: { status: FrameStatus }) {
  return (
    <span
      title={frameStatusHelp[status]}
      className={`inline-flex items-center gap-1 whitespace-nowrap rounded border px-1.5 py-px font-mono text-[11px] font-medium leading-4 ${chip[status]}`}
    >
      <span aria-hidden>{mark[status]}</span>
      {frameStatusLabels[status]}
    </span>
  );
}
