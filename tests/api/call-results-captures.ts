// Captures made by our own encoder (shared/decoder/encode) for the call-results tests (API and
// browser): a damaged answer then a retry, a lock conflict, files sized by an open answer's rc and
// by compute file size, and a multidrop line with one RTS line per station.
import { BDOS } from '../../shared/decoder/calls';
import { computeSizeCalls, encodeSession, readFileCalls, readRandomCalls, requestInfo, responseInfo, Tags, type EncodedSession, type ScriptCall, type SessionScript } from '../../shared/decoder/encode';
import { renderWaveform } from '../../shared/decoder/encode';
import { vcdBytes } from '../../shared/decoder/encode';

export const BIT_RATE = 800_000;
const SPB = 5;
const text = (n: number) => new TextEncoder().encode('Let all things be done decently and in order. '.repeat(Math.ceil(n / 47)).slice(0, n));

/** A clocked NRZI VCD of the session with its RTS lines, as a logic analyzer would record it. */
export function vcdOf(session: EncodedSession): Buffer {
  const w = renderWaveform({
    links: session.links.map((l) => ({ name: l.name, bits: l.bits })),
    samplesPerBit: SPB,
    samplePeriodSeconds: 1 / (BIT_RATE * SPB),
    encoding: 'nrzi',
    clock: { name: 'clk', edge: 'rising' },
    handshake: session.rts,
  });
  return Buffer.from(vcdBytes(w, { timescale: '1ns' }));
}

// Record lock and unlock, 42 and 43 as MP/M II numbers them (CP/M 3 Programmer's Guide, section 3,
// functions 42 and 43); status 8 "record locked by another" from memory of the MP/M II guide.
const lockCall = (tags: Tags, code: number, status: number, thinkTime: number): ScriptCall => {
  const tag = tags.next();
  const fcb = { name: 'ACCOUNTS.DAT', random: 4 };
  return { request: requestInfo(code, tag, 0, { fcb }), response: responseInfo(code, tag, status, { fcb }), serverDelay: 0.0003, thinkTime, sends: 1 };
};

/**
 * Station 0x21 locks record 4 of ACCOUNTS.DAT, reads HYMNS.TXT (its third answer arrives damaged
 * and the station asks again), opens PARISH.DAT (the answer's rc says 9 records), sizes
 * REGISTER.DAT with compute file size (37 records) and unlocks. Station 0x22 asks for the same
 * lock meanwhile and is refused.
 */
export function resultsSession(): EncodedSession {
  const a = new Tags();
  const b = new Tags();
  const hymns = readFileCalls('HYMNS.TXT', text(500), { tags: a, delay: 0.0004 });
  hymns[2].damagedResponses = 1;
  const openTag = a.next();
  // CP/M 2.2 Operating System Manual 5.2, Table 5-2: rc is the record count of extent ex; open (15) fills in the FCB
  const open: ScriptCall = {
    request: requestInfo(BDOS.OPEN_FILE, openTag, 0, { fcb: { name: 'PARISH.DAT' } }),
    response: responseInfo(BDOS.OPEN_FILE, openTag, 0, { fcb: { name: 'PARISH.DAT', rc: 9 } }),
    serverDelay: 0.0003,
  };
  const parish = readRandomCalls('PARISH.DAT', text(128 * 9), [0, 4], { tags: a, delay: 0.0003 });
  // CP/M 2.2 Operating System Manual 5.2, function 35: r0–r2 are set to the virtual file size
  const register = [...computeSizeCalls('REGISTER.DAT', 37, { tags: a, delay: 0.0003 }), ...readRandomCalls('REGISTER.DAT', text(128 * 37), [36], { tags: a, delay: 0.0003 })];
  const script: SessionScript = {
    bitRate: BIT_RATE,
    stations: [
      { address: 0x21, port: 'p1', start: 0.0002, calls: [lockCall(a, 42, 0, 0.0003), ...hymns, open, ...parish, ...register, lockCall(a, 43, 0, 0.0003)] },
      { address: 0x22, port: 'p2', start: 0.0004, calls: [lockCall(b, 42, 8, 0.004)] },
    ],
  };
  return encodeSession(script);
}

/** Two stations on one multidrop port, each with its own RTS line. */
export function multidropSession(): EncodedSession {
  return encodeSession({
    bitRate: BIT_RATE,
    stations: [
      { address: 0x31, port: 'm', rtsName: 'm_rts_31', start: 0.0001, rts: true, calls: readFileCalls('HYMNS.TXT', text(300), { tags: new Tags(), delay: 0.0004 }) },
      { address: 0x32, port: 'm', rtsName: 'm_rts_32', start: 0.03, rts: true, calls: readFileCalls('PSALMS.TXT', text(200), { tags: new Tags(), delay: 0.0006 }) },
    ],
  });
}

