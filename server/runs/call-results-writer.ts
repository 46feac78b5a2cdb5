// What the call stage stores beyond an exchange's own row and a file's bytes: the damaged answers
// of an exchange (bad-FCS answers the station answered with a retry), where a recovered file's
// size came from, and lock conflicts (two stations holding or asking for a lock on the same
// record), kept on the file and on both exchanges. Written by the call stage (call-stage.ts)
// after the rows it belongs to; read back by services/calls/call-results.ts.
// Station names are not stored: they are looked up when served, so renaming a station shows.
import type Database from 'better-sqlite3';
import { eq } from 'drizzle-orm';
import { drizzle } from 'drizzle-orm/better-sqlite3';
import type { FrameRef } from '../../shared/decoder/calls';
import type { RecoveredFile } from '../../shared/decoder/calls';
import type { ExchangeLockConflict, LockConflictOutcome } from '../../shared/schemas';
import { exchangeFrames, exchanges, recoveredFiles } from '../db/schema';

/** A lock conflict as the file keeps it (exchange ids of the two lock requests, addresses). */
export interface StoredFileLockConflict {
  record: number;
  holder: { address: number; exchangeId: number | null };
  requester: { address: number; exchangeId: number | null };
  outcome: LockConflictOutcome;
}

/** One side of a lock conflict as an exchange keeps it. */
export interface StoredExchangeLockConflict {
  record: number;
  role: ExchangeLockConflict['role'];
  other: number;
  otherExchangeId: number | null;
  outcome: LockConflictOutcome;
}

type Driver = Database.Database;

/**
 * Stores an exchange's damaged answers and links their frames to it in exchange_frames, so the
 * timeline's call markers and the inspector find the exchange from the damaged frame too.
 */
export function storeDamagedAnswers(sqlite: Driver, runId: number, exchangeId: number, frameIds: number[]): void {
  if (frameIds.length === 0) return;
  const d = drizzle(sqlite);
  d.update(exchanges).set({ damagedResponseFrameIds: JSON.stringify(frameIds) }).where(eq(exchanges.id, exchangeId)).run();
  d.insert(exchangeFrames)
    .values(frameIds.map((frameId) => ({ runId, frameId, exchangeId })))
    .run();
}

/**
 * Collects a run's file results: call `file` for each stored file (inside the files'
 * transaction), then `finish` writes the exchanges' side of the lock conflicts.
 */
export class FileResultsWriter {
  private readonly d;
  private readonly byExchange = new Map<number, StoredExchangeLockConflict[]>();

  constructor(
    sqlite: Driver,
    /** the exchange whose request is this frame, if it was stored */
    private readonly exchangeOf: (request: FrameRef) => number | null,
  ) {
    this.d = drizzle(sqlite);
  }

  file(fileId: number, f: Pick<RecoveredFile, 'sizeSource' | 'sizeFrom' | 'lockConflicts'>): void {
    const conflicts: StoredFileLockConflict[] = f.lockConflicts.map((c) => ({
      record: c.record,
      holder: { address: c.holder.station, exchangeId: this.exchangeOf(c.holder.lock) },
      requester: { address: c.requester.station, exchangeId: this.exchangeOf(c.requester.lock) },
      outcome: c.outcome,
    }));
    this.d
      .update(recoveredFiles)
      .set({
        sizeSource: f.sizeSource,
        sizeExchangeId: f.sizeFrom ? this.exchangeOf(f.sizeFrom) : null,
        lockConflicts: JSON.stringify(conflicts),
      })
      .where(eq(recoveredFiles.id, fileId))
      .run();
    for (const c of conflicts) {
      this.add(c.holder.exchangeId, { record: c.record, role: 'holder', other: c.requester.address, otherExchangeId: c.requester.exchangeId, outcome: c.outcome });
      this.add(c.requester.exchangeId, { record: c.record, role: 'requester', other: c.holder.address, otherExchangeId: c.holder.exchangeId, outcome: c.outcome });
    }
  }

  private add(exchangeId: number | null, c: StoredExchangeLockConflict): void {
    if (exchangeId === null) return;
    const list = this.byExchange.get(exchangeId);
    if (list) list.push(c);
    else this.byExchange.set(exchangeId, [c]);
  }

  finish(): void {
    for (const [id, list] of this.byExchange) {
      this.d.update(exchanges).set({ lockConflicts: JSON.stringify(list) }).where(eq(exchanges.id, id)).run();
    }
  }
}
