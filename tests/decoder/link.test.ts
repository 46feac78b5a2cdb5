import { describe, expect, it } from 'vitest';
import { decodeLink } from '../../shared/decoder/link';

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
  });
});
