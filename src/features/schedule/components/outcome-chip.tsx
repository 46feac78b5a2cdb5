import type { ExchangeOutcomeName } from '../../../../shared/schemas';

const words: Record<ExchangeOutcomeName, { mark: string; text: string; className: string; help: string }> = {
  answered: { mark: '↩', text: 'answered', className: 'border-tide-500/40 text-tide-700 dark:text-tide-300', help: 'the server answered the first send' },
  retried: { mark: '↻', text: 'retried', className: 'border-flare-600/55 bg-flare-500/12 text-flare-700 dark:text-flare-300', help: 'the station sent the same call and tag again before an answer' },
  unanswered: { mark: '✕', text: 'unanswered', className: 'border-danger/50 bg-danger-soft text-danger', help: 'no answer within the timeout' },
};

/** Words first, colour second, like the frame status chips. */
export function OutcomeChip({ outcome }: { outcome: ExchangeOutcomeName }) {
  const w = words[outcome];
  return (
    <span title={w.help} className={`inline-flex items-center gap-1 whitespace-nowrap rounded border px-1.5 py-px font-mono text-[11px] font-medium leading-4 ${w.className}`}>
      <span aria-hidden>{w.mark}</span>
      {w.text}
    </span>
  );
}
