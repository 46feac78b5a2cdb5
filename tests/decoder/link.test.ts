import { describe, expect, it } from 'vitest';
import { decodeLink } from '../../shared/decoder';

const frame = (...b: number[]) => new Uint8Array(b);

// Control-field layouts: ISO/IEC 13239:2002 (HDLC) modulo-8 formats, bit 1 = least significant bit, sent first (from memory).
describe('link decode (ISO/IEC 13239:2002 modulo-8 control field, from memory)', () => {
  it('decodes an I frame with N(S), N(R) and P/F', () => {
    // N(S)=3 in bits 2-4, P/F bit 5, N(R)=5 in bits 6-8: 101 1 011 0 = 0xB6
    const d = decodeLink(frame(0x05, 0xb6, 0x41, 0x42), 4)!;
    expect(d).toMatchObject({ address: 5, control: 0xb6, kind: 'I', command: 'I', ns: 3, nr: 5, pf: true, infoOffset: 2, infoLength: 2 });
  });

  it('names the four supervisory commands and reads N(R)', () => {
    expect(decodeLink(frame(1, 0x01), 2)).toMatchObject({ kind: 'S', command: 'RR', nr: 0, pf: false, ns: null });
    expect(decodeLink(frame(1, 0x05 | 0x10 | (2 << 5)), 2)).toMatchObject({ kind: 'S', command: 'RNR', nr: 2, pf: true });
    expect(decodeLink(frame(1, 0x09 | (7 << 5)), 2)).toMatchObject({ command: 'REJ', nr: 7 });
    expect(decodeLink(frame(1, 0x0d), 2)).toMatchObject({ command: 'SREJ' });
  });

  it('names unnumbered commands by their M bits whatever the P/F bit (ISO/IEC 13239:2002, from memory)', () => {
    const names: [number, string][] = [
      [0x03, 'UI'],
      [0x83, 'SNRM'],
      [0x63, 'UA'],
      [0x2f, 'SABM'],
      [0x87, 'FRMR'],
      [0xaf, 'XID'],
      [0xe3, 'TEST'],
      [0x23, 'UP'],
      [0x6f, 'SABME'],
      [0xcf, 'SNRME'],
    ];
    for (const [code, name] of names) {
      expect(decodeLink(frame(0xff, code), 2)!.command).toBe(name);
      const withPf = decodeLink(frame(0xff, code | 0x10), 2)!;
      expect(withPf.command).toBe(name);
      expect(withPf.pf).toBe(true);
      expect(withPf.kind).toBe('U');
    }
  });

  it('gives both names for codes that differ between command and response unless the role is known', () => {
    expect(decodeLink(frame(1, 0x1f), 2)!.command).toBe('SARM/DM');
    expect(decodeLink(frame(1, 0x1f), 2, 'response')!.command).toBe('DM');
    expect(decodeLink(frame(1, 0x53), 2, 'command')!.command).toBe('DISC');
    expect(decodeLink(frame(1, 0x07), 2, 'response')!.command).toBe('RIM');
    expect(decodeLink(frame(1, 0x07), 2, 'command')!.command).toBe('SIM');
  });

  it("marks unknown unnumbered codes '?'", () => {
    expect(decodeLink(frame(1, 0x0b), 2)!.command).toBe('?');
  });

  it('returns null when there is no control octet', () => {
    expect(decodeLink(frame(1), 1)).toBeNull();
    expect(decodeLink(frame(1), 2)).toBeNull();
    expect(decodeLink(frame(1, 2, 3), 1)).toBeNull();
  });

  it('counts information octets up to the given length, never past the bytes there are', () => {
    expect(decodeLink(frame(1, 0, 9, 9, 9, 0xaa, 0xbb), 5)).toMatchObject({ infoOffset: 2, infoLength: 3 });
    expect(decodeLink(frame(1, 0, 9), 10)).toMatchObject({ infoLength: 1 });
    expect(decodeLink(frame(1, 0x01, 9, 9), 4)).toMatchObject({ kind: 'S', infoLength: 2 });
    expect(decodeLink(frame(1, 0x03, 9), 3)).toMatchObject({ kind: 'U', infoLength: 1 });
  });

  it('reads kind, N(S), N(R) and P/F of every control octet by the modulo-8 layout', () => {
    for (let c = 0; c < 256; c++) {
      // bit 1 is the least significant bit; written out as bits 1..8
      const bit = (i: number) => (c >> (i - 1)) & 1;
      const d = decodeLink(frame(0x21, c), 2)!;
      const num = (...bits: number[]) => bits.reduce((v, b, k) => v | (bit(b) << k), 0);
      expect(d.address).toBe(0x21);
      expect(d.control).toBe(c);
      expect(d.pf).toBe(bit(5) === 1);
      if (bit(1) === 0) expect(d).toMatchObject({ kind: 'I', command: 'I', ns: num(2, 3, 4), nr: num(6, 7, 8) });
      else if (bit(2) === 0) expect(d).toMatchObject({ kind: 'S', command: ['RR', 'RNR', 'REJ', 'SREJ'][num(3, 4)], ns: null, nr: num(6, 7, 8) });
      else expect(d).toMatchObject({ kind: 'U', ns: null, nr: null });
    }
  });

  // ISO/IEC 13239:2002 unnumbered command and response codes, with the SDLC-only CFGR, BCN and
  // the SIM/RIM, SARM/DM, DISC/RD pairs of IBM SDLC (all from memory), P/F bit clear.
  const U_TABLE: [number, string, string][] = [
    [0x03, 'UI', 'UI'],
    [0x83, 'SNRM', 'SNRM'],
    [0x43, 'DISC', 'RD'],
    [0x23, 'UP', 'UP'],
    [0x63, 'UA', 'UA'],
    [0xe3, 'TEST', 'TEST'],
    [0x07, 'SIM', 'RIM'],
    [0x87, 'FRMR', 'FRMR'],
    [0xc7, 'CFGR', 'CFGR'],
    [0x0f, 'SARM', 'DM'],
    [0x8f, 'RSET', 'RSET'],
    [0x4f, 'SARME', 'SARME'],
    [0xcf, 'SNRME', 'SNRME'],
    [0x2f, 'SABM', 'SABM'],
    [0xaf, 'XID', 'XID'],
    [0x6f, 'SABME', 'SABME'],
    [0xef, 'BCN', 'BCN'],
    [0xc3, 'SM', 'SM'],
  ];

  it('names every unnumbered code as command and as response, and marks every other one unknown', () => {
    for (let c = 0; c < 256; c++) {
      if ((c & 3) !== 3) continue;
      const entry = U_TABLE.find(([code]) => code === (c & 0xef));
      const [, command, response] = entry ?? [0, '?', '?'];
      expect(decodeLink(frame(1, c), 2, 'command')!.command, `0x${c.toString(16)}`).toBe(command);
      expect(decodeLink(frame(1, c), 2, 'response')!.command).toBe(response);
      expect(decodeLink(frame(1, c), 2)!.command).toBe(command === response ? command : `${command}/${response}`);
    }
  });
});
