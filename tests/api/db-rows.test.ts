import { eq, getTableColumns, sql } from 'drizzle-orm';
import { afterAll, describe, expect, it } from 'vitest';
import { openDb } from '../../server/db/client';
import { allRows } from '../../server/db/rows';
import { captures, decodeJobs, frames, rigs, users } from '../../server/db/schema';

// allRows builds rows from the driver's arrays; it must give what Drizzle's own mapping gives,
// for every kind of column the schema uses (booleans, millisecond dates, blobs, nulls, enums).
describe('rows of a hot select', () => {
  const h = openDb(':memory:');
  afterAll(() => h.close());
  const now = new Date(1_700_000_000_123);
  h.db.insert(users).values({ email: 'a@example.test', name: 'A', passwordHash: 'x', createdAt: now }).run();
  h.db.insert(rigs).values({ name: 'R', bitRate: 9600, encoding: 'nrz', clockEdge: 'rising', bitOrder: 'lsb-first', createdAt: now }).run();
  h.db.insert(captures).values({ rigId: 1, name: 'c', size: 1, sha256: 'x', format: 'octets', settings: '{}', uploadedBy: 1, uploadedAt: now }).run();
  h.db.insert(decodeJobs).values({ captureId: 1, state: 'done', settings: '{}', createdAt: now, finishedAt: null, rowsCleared: true }).run();
  const frame = {
    jobId: 1, captureId: 1, link: 'A', seq: 0, firstSample: 1.5, lastSample: 9, t: 0.25, tEnd: 0.5, status: 'bad-fcs' as const, address: null, control: 3,
    kind: 'I' as const, command: null, ns: 1, nr: 2, infoLength: 2, bitLength: 40, bytes: Buffer.from([1, 2, 3]), fcsReceived: 7, fcsComputed: 8,
    flippedBit: null, stuffed: '[]', hex: '0102', text: '..',
  };
  h.db.insert(frames).values([{ ...frame, pf: true }, { ...frame, seq: 1, pf: false }, { ...frame, seq: 2, pf: null }]).run();

  it('maps every column of a table as Drizzle does, in the selection order', () => {
    for (const table of [frames, decodeJobs]) {
      const selection = getTableColumns(table);
      const stmt = h.db.select(selection).from(table).prepare();
      expect(allRows(stmt, selection)).toEqual(stmt.all());
    }
  });

  it('maps typed sql fragments and placeholders, with a selection in another order than the table', () => {
    const selection = { hex: sql<string>`upper(${frames.hex})`, pf: frames.pf, n: sql<number>`${frames.seq} + 1`.mapWith(Number), id: frames.id };
    const stmt = h.db.select(selection).from(frames).where(eq(frames.jobId, sql.placeholder('job'))).orderBy(frames.seq).prepare();
    const rows = allRows(stmt, selection, { job: 1 });
    expect(rows).toEqual(stmt.all({ job: 1 }));
    expect(rows.map((r) => r.pf)).toEqual([true, false, null]);
    expect(rows[0]).toEqual({ hex: '0102', pf: true, n: 1, id: 1 });
  });
});
