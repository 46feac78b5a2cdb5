// Link-layer decode of the address and modulo-8 control octets (ISO/IEC 13239 HDLC, the
// concepts IBM SDLC shares). Bit 1 of the control octet is its least significant bit, the one
// sent first:
//   I frame  : bit1 = 0,           N(S) = bits 2-4, P/F = bit 5, N(R) = bits 6-8
//   S frame  : bits1-2 = 1 0,      S = bits 3-4 (RR 00, RNR 01, REJ 10, SREJ 11), P/F, N(R)
//   U frame  : bits1-2 = 1 1,      M = bits 3-4 and 6-8, P/F = bit 5
import type { LinkDecode } from './types';

const S_NAMES = ['RR', 'RNR', 'REJ', 'SREJ'] as const;

/**
 * U-frame codes with the P/F bit cleared. A few codes mean one thing as a command and another as
 * a response; without knowing the direction both names are given (e.g. 'SARM/DM').
 * Values from ISO/IEC 13239 (from memory); CFGR, BCN and the SDLC pairings from IBM SDLC
 * concepts (from memory).
 */
const U_CODES: Record<number, { command: string; response: string }> = {
  0x03: { command: 'UI', response: 'UI' },
  0x83: { command: 'SNRM', response: 'SNRM' },
  0x43: { command: 'DISC', response: 'RD' },
  0x23: { command: 'UP', response: 'UP' },
  0x63: { command: 'UA', response: 'UA' },
  0xe3: { command: 'TEST', response: 'TEST' },
  0x07: { command: 'SIM', response: 'RIM' },
  0x87: { command: 'FRMR', response: 'FRMR' },
  0xc7: { command: 'CFGR', response: 'CFGR' },
  0x0f: { command: 'SARM', response: 'DM' },
  0x8f: { command: 'RSET', response: 'RSET' },
  0x4f: { command: 'SARME', response: 'SARME' },
  0xcf: { command: 'SNRME', response: 'SNRME' },
  0x2f: { command: 'SABM', response: 'SABM' },
  0xaf: { command: 'XID', response: 'XID' },
  0x6f: { command: 'SABME', response: 'SABME' },
  0xef: { command: 'BCN', response: 'BCN' },
  0xc3: { command: 'SM', response: 'SM' },
};

/** Name of a U code (P/F masked); '?' when the code is not a known command or response. */
export function uCommandName(control: number, role?: 'command' | 'response'): string {
  const entry = U_CODES[control & 0xef];
  if (!entry) return '?';
  if (role === 'command') return entry.command;
  if (role === 'response') return entry.response;
  return entry.command === entry.response ? entry.command : `${entry.command}/${entry.response}`;
}

/**
 * Decodes address and control of a frame whose first `length` octets are address, control and
 * information (the FCS not included). Returns null when fewer than two octets are present.
 * `role` picks the name of direction-dependent U codes when the caller knows it.
 */
export function decodeLink(bytes: Uint8Array, length: number, role?: 'command' | 'response'): LinkDecode | null {
  if (length < 2 || bytes.length < 2) return null;
  const address = bytes[0];
  const control = bytes[1];
  const pf = (control & 0x10) !== 0;
  const infoLength = Math.max(0, Math.min(length, bytes.length) - 2);
  if ((control & 0x01) === 0) {
    return { address, control, kind: 'I', command: 'I', ns: (control >> 1) & 7, nr: (control >> 5) & 7, pf, infoOffset: 2, infoLength };
  }
  if ((control & 0x03) === 0x01) {
    return { address, control, kind: 'S', command: S_NAMES[(control >> 2) & 3], ns: null, nr: (control >> 5) & 7, pf, infoOffset: 2, infoLength };
  }
  return { address, control, kind: 'U', command: uCommandName(control, role), ns: null, nr: null, pf, infoOffset: 2, infoLength };
}
