// The call stage's stored results (server/runs/call-results-writer.ts) read back into the wire
// shapes of shared/schemas/calls.ts, with station names looked up now so a renamed station shows.
import type { ExchangeLockConflict, RecoveredFileDetail } from '../../../shared/schemas';
import type { StoredExchangeLockConflict, StoredFileLockConflict } from '../../runs/call-results-writer';

const named = (address: number, names: Map<number, string>) => ({ address, name: names.get(address) ?? null });

export function exchangeLockConflicts(stored: string, names: Map<number, string>): ExchangeLockConflict[] {
  return (JSON.parse(stored) as StoredExchangeLockConflict[]).map((c) => ({
    record: c.record,
    role: c.role,
    other: named(c.other, names),
    otherExchangeId: c.otherExchangeId,
    outcome: c.outcome,
  }));
}

export function fileLockConflictDetail(stored: string, names: Map<number, string>): NonNullable<RecoveredFileDetail['lockConflictDetail']> {
  return (JSON.parse(stored) as StoredFileLockConflict[]).map((c) => ({
    record: c.record,
    holder: { ...named(c.holder.address, names), exchangeId: c.holder.exchangeId },
    requester: { ...named(c.requester.address, names), exchangeId: c.requester.exchangeId },
    outcome: c.outcome,
  }));
}
