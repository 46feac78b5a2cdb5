import type { ExchangeRow } from '../../../../shared/schemas';

export const exchangeOrders = ['time', 'slowest', 'retried', 'unanswered'] as const;
export type ExchangeOrder = (typeof exchangeOrders)[number];

export const exchangeOrderLabels: Record<ExchangeOrder, string> = {
  time: 'In time order',
  slowest: 'Slowest first',
  retried: 'Retried first',
  unanswered: 'Unanswered first',
};

export function parseExchangeOrder(value: string | null): ExchangeOrder {
  return (exchangeOrders as readonly string[]).includes(value ?? '') ? (value as ExchangeOrder) : 'time';
}

/** The timeline's own URL filters around one exchange: its station, from the request to just past the answer. */
export function timelineSearchFor(row: ExchangeRow): string {
  const end = row.tResponse ?? row.tRequestEnd;
  const margin = Math.max(0.0005, (end - row.tRequest) * 0.1);
  const params = new URLSearchParams({
    station: String(row.station.address),
    from: Math.max(0, row.tRequest - margin).toFixed(6),
    to: (end + margin * 4).toFixed(6),
  });
  return `?${params}`;
}
