import { describe, expect, it } from 'vitest';
import { applyFieldMap, BDOS, CPM_ENVELOPE, CPM_ENVELOPE_DOCUMENT, FCB, fieldMapToMarkdown, validateFieldMap, type FieldMapInput } from '../../shared/decoder/calls';
import { requestInfo } from '../../shared/decoder/encode';

const clone = (): FieldMapInput => JSON.parse(JSON.stringify(CPM_ENVELOPE_DOCUMENT));

describe('the built-in CP/M call envelope map', () => {
  it('validates against the field map schema', () => {
    expect(validateFieldMap(CPM_ENVELOPE_DOCUMENT)).toMatchObject({ ok: true });
  });

  // CP/M Operating System Manual (CP/M 2.2), section 5.2 "Call Conventions": the numbers of the
  // functions ("FUNCTION 17: SEARCH FOR FIRST" …); the names are the map's shortened forms.
  it.each([
    [2, 'console output'],
    [5, 'list output'],
    [9, 'print string'],
    [13, 'reset disk system'],
    [14, 'select disk'],
    [15, 'open file'],
    [16, 'close file'],
    [17, 'search first'],
    [18, 'search next'],
    [19, 'delete file'],
    [20, 'read sequential'],
    [21, 'write sequential'],
    [22, 'make file'],
    [23, 'rename file'],
    [26, 'set DMA address'],
    [33, 'read random'],
    [34, 'write random'],
    [35, 'compute file size'],
    [36, 'set random record'],
    [40, 'write random with zero fill'],
  ])('gives BDOS function %i, numbered as the CP/M 2.2 manual section 5.2 numbers it, the name "%s"', (code, name) => {
    expect(CPM_ENVELOPE.calls.find((c) => c.code === code)?.name).toBe(name);
  });

  // CP/M 3 Programmer's Guide (first edition, 1983), section 3, functions 42 and 43: "Lock Record"
  // and "Unlock Record", MP/M II functions that CP/M 3 supports for compatibility.
  it('numbers record lock and unlock 42 and 43 as MP/M II does', () => {
    expect(BDOS.LOCK_RECORD).toBe(42);
    expect(BDOS.UNLOCK_RECORD).toBe(43);
    expect(CPM_ENVELOPE.calls.find((c) => c.code === 42)?.name).toBe('lock record');
    expect(CPM_ENVELOPE.calls.find((c) => c.code === 43)?.name).toBe('unlock record');
  });

  // CP/M 2.2 manual section 5.2, Figure 5-2 "File Control Block Format": dr 0, f1–f8 1–8,
  // t1–t3 9–11, ex 12, s1 13, s2 14, rc 15, d0–dn 16–31, cr 32, r0–r2 33–35.
  it('places every FCB field at the CP/M 2.2 offset, after the 3-octet request header', () => {
    const info = requestInfo(BDOS.READ_RANDOM, 7, 0, { fcb: { name: 'BAPTISMS.DAT' } });
    const call = applyFieldMap(CPM_ENVELOPE, info, 'request');
    const at = (id: string) => call.fields.find((f) => f.id === id)!;
    expect(at('dr').offset - 3).toBe(FCB.dr);
    expect([at('name').offset - 3, at('name').length]).toEqual([FCB.f1, 11]);
    expect(at('ex').offset - 3).toBe(12);
    expect(at('s1').offset - 3).toBe(13);
    expect(at('s2').offset - 3).toBe(14);
    expect(at('rc').offset - 3).toBe(15);
    expect([at('d').offset - 3, at('d').length]).toEqual([16, 16]);
    expect(at('cr').offset - 3).toBe(32);
    expect([at('r').offset - 3, at('r').length]).toEqual([33, 3]);
    expect(info.length).toBe(3 + 36);
  });

  it('gives every layout fields that tile its frame without gaps', () => {
    for (const layout of CPM_ENVELOPE.layouts) {
      const info = new Uint8Array(400);
      info[0] = layout.when?.calls?.[0] ?? 0xee;
      const call = applyFieldMap(CPM_ENVELOPE, info, layout.when?.direction ?? 'request');
      expect(call.layout).toBe(layout.id);
      expect(call.truncated).toBe(false);
    }
    const info = requestInfo(BDOS.WRITE_RANDOM, 1, 0, { fcb: { name: 'A.B' }, record: new Uint8Array(128) });
    const call = applyFieldMap(CPM_ENVELOPE, info, 'request');
    let at = 0;
    for (const f of call.fields) {
      expect(f.offset).toBe(at);
      at += f.length;
    }
    expect(at).toBe(info.length);
    expect(call.unexplained).toBe(0);
  });

  // CP/M 2.2 manual 5.2, function 20: 00H ok, "a nonzero value ... if no data exist at the next
  // record position (for example, end-of-file)"; the value 01 for it: CP/M 3 Programmer's Guide,
  // section 3, function 20 ("01 Reading unwritten data (end-of-file)").
  it('names the read sequential return codes 0 ok and 1 end of file', () => {
    const layout = CPM_ENVELOPE.layouts.find((l) => l.id === 'read-sequential-response')!;
    expect(layout.fields.find((f) => f.role === 'status')!.values).toMatchObject({ '0': 'ok', '1': 'end of file' });
  });

  // CP/M 2.2 manual 5.2, function 33: 01 reading unwritten data, 02 not returned in random mode,
  // 03 cannot close current extent, 04 seek to unwritten extent, 05 not returned in read mode,
  // 06 seek past physical end of disk.
  it('names the read random return codes 1, 3, 4 and 6', () => {
    const values = CPM_ENVELOPE.layouts.find((l) => l.id === 'read-random-response')!.fields.find((f) => f.role === 'status')!.values!;
    expect(Object.keys(values).sort()).toEqual(['0', '1', '3', '4', '6']);
    expect(values['6']).toMatch(/past physical end of disk/);
  });

  // CP/M 2.2 manual 5.2, functions 15 and 17: a directory code 0–3 when found, 0FFH when not.
  it('names the open and search return codes: directory code 0–3 or 0xFF not found', () => {
    for (const id of ['open-file-response', 'search-first-response']) {
      const values = CPM_ENVELOPE.layouts.find((l) => l.id === id)!.fields.find((f) => f.role === 'status')!.values!;
      expect(Object.keys(values).sort()).toEqual(['0', '0xFF', '1', '2', '3']);
    }
  });

  // CP/M 2.2 manual 5.2: "The basic unit of file information is a 128-byte record".
  // CP/M 2.2 manual 5.2: function 14 (select disk) and function 13 (reset disk system) return
  // nothing. The envelope's server answers 0xFF on a select error as CP/M 3 does (CP/M 3
  // Programmer's Guide, section 3, function 14) and forwards the 2.2 BDOS's 0FFH after a reset
  // when a $ file exists on A (from memory of the CP/M 2.2 BDOS listing); the value names say so.
  it('names the select disk and reset disk codes the CP/M 2.2 manual leaves undefined after where they come from', () => {
    const values = (id: string) => CPM_ENVELOPE.layouts.find((l) => l.id === id)!.fields.find((f) => f.role === 'status')!.values!;
    expect(values('select-disk-response')).toEqual({ '0': 'ok', '0xFF': 'select error (as CP/M 3 answers it)' });
    expect(values('reset-disk-system-response')['0xFF']).toMatch(/2\.2 BDOS behaviour/);
  });

  // CP/M 2.2 manual 5.2, Table 5-2: "rc record count for extent ex; takes on values from 0-127";
  // "s2 reserved for internal system use". 128 on open and the flag in bit 7 of s2 are the BDOS's
  // own (from memory of the CP/M 2.2 BDOS listing).
  it('describes rc as 0–127 with 128 from the BDOS, and s2 as module bits plus the BDOS’s flag', () => {
    const field = (id: string) => CPM_ENVELOPE.layouts.find((l) => l.id === 'open-file-request')!.fields.find((f) => f.id === id)!;
    expect(field('rc').meaning).toMatch(/0–127; the BDOS sets 128/);
    expect(field('s2').meaning).toMatch(/low four bits.*bit 7 is the BDOS’s own/);
  });

  it('carries one 128-byte record in write requests and read responses', () => {
    const rec = (id: string) => CPM_ENVELOPE.layouts.find((l) => l.id === id)!.fields.find((f) => f.role === 'record-data');
    expect(rec('write-sequential-request')?.length).toBe(128);
    expect(rec('read-sequential-response')?.length).toBe(128);
    expect(rec('read-random-response')?.length).toBe(128);
    expect(rec('read-sequential-request')).toBeUndefined();
    expect(rec('write-random-response')).toBeUndefined();
  });
});

describe('field map validation', () => {
  it('refuses a bytes field without a length, with the path of the field', () => {
    const doc = clone();
    delete (doc.layouts[2].fields[3] as { length?: unknown }).length;
    (doc.layouts[2].fields[3] as { type: string }).type = 'bytes';
    const r = validateFieldMap(doc);
    expect(r.ok).toBe(false);
    if (!r.ok) expect(r.errors).toContainEqual({ path: 'layouts[2].fields[3].length', message: expect.stringMatching(/needs a length/) });
  });

  it('refuses a u16 field given a length of 3', () => {
    const doc = clone();
    doc.layouts[0].fields[1] = { id: 'tag', type: 'u16le', length: 3 };
    const r = validateFieldMap(doc);
    expect(!r.ok && r.errors.map((e) => e.path)).toContain('layouts[0].fields[1].length');
  });

  it('refuses an offset after a field that does not come earlier', () => {
    const doc = clone();
    doc.layouts[1].fields[0].offset = { after: 'nowhere' };
    const r = validateFieldMap(doc);
    expect(!r.ok && r.errors).toEqual([{ path: 'layouts[1].fields[0].offset.after', message: '"nowhere" is not an earlier field of this layout' }]);
  });

  it('refuses a length taken from a text field', () => {
    const doc = clone();
    doc.layouts[0].fields.push({ id: 'more', type: 'bytes', length: { field: 'text' } });
    const r = validateFieldMap(doc);
    // layout 0 is console output's request: call, tag, user, text (rest) — 'more' follows a rest field too
    expect(!r.ok && r.errors.map((e) => e.path)).toEqual(expect.arrayContaining(['layouts[0].fields[4].length.field', 'layouts[0].fields[4].offset']));
  });

  it('refuses an unknown type and an unknown role, naming the field', () => {
    const doc = clone() as unknown as { layouts: { fields: Record<string, unknown>[] }[] };
    doc.layouts[4].fields[2].type = 'u32';
    doc.layouts[5].fields[0].role = 'colour';
    const r = validateFieldMap(doc);
    expect(!r.ok && r.errors.map((e) => e.path)).toEqual(expect.arrayContaining(['layouts[4].fields[2].type', 'layouts[5].fields[0].role']));
  });

  it('refuses two fields with one role in a layout', () => {
    const doc = clone();
    doc.layouts[0].fields[2].role = 'tag';
    const r = validateFieldMap(doc);
    expect(!r.ok && r.errors.map((e) => e.path)).toEqual(['layouts[0].fields[2].role']);
  });

  it('refuses a missing name and version at the top level', () => {
    const r = validateFieldMap({ layouts: [] });
    expect(!r.ok && r.errors.map((e) => e.path)).toEqual(expect.arrayContaining(['name', 'version', 'layouts']));
  });

  it('refuses a bit field that does not fit its octet', () => {
    const r = validateFieldMap({
      name: 'flags',
      version: 1,
      layouts: [{ id: 'all', fields: [{ id: 'f', type: 'bits', bits: [{ name: 'mode', shift: 6, width: 3 }] }] }],
    });
    expect(!r.ok && r.errors.map((e) => e.path)).toEqual(['layouts[0].fields[0].bits[0].width']);
  });

  it('refuses a field present only for some status values in a layout with no status field before it', () => {
    const r = validateFieldMap({
      name: 'x',
      version: 1,
      layouts: [{ id: 'a', fields: [{ id: 'data', type: 'bytes', length: 4, onlyIfStatus: [0] }, { id: 's', type: 'u8', role: 'status' }] }],
    });
    expect(!r.ok && r.errors).toEqual([{ path: 'layouts[0].fields[0].onlyIfStatus', message: expect.stringMatching(/earlier field with the status role/) }]);
  });

  it('refuses layouts chosen by call code when the map does not say where the call code is', () => {
    const r = validateFieldMap({ name: 'x', version: 1, layouts: [{ id: 'a', when: { calls: [1] }, fields: [{ id: 'c', type: 'u8' }] }] });
    expect(!r.ok && r.errors.map((e) => e.path)).toEqual(['layouts[0].when.calls']);
  });
});

describe('the Markdown protocol description', () => {
  it('lists the calls and every layout with offsets, lengths, roles and value names', () => {
    const md = fieldMapToMarkdown(CPM_ENVELOPE);
    expect(md).toMatch(/^# CP\/M call envelope \(version 1\)/);
    expect(md).toContain('| 15 (0x0F) | open file |');
    expect(md).toContain('### read random (request)');
    // r0–r2 sit at FCB 33, i.e. 3 + 33 in the information field
    expect(md).toMatch(/\| 36 \| 3 \| r \| u24le \| record-number \|/);
    expect(md).toMatch(/\| 2 \| 1 \| status \| u8 \| status \| BDOS return code \| 0 ok; 1 end of file \|/);
    expect(md).toContain('| 3 | rest of frame | text | ascii |');
    // the record after a read is sent only with status 0; nothing after it has a fixed offset
    expect(md).toMatch(/\| 39 \| 128, only when status is 0 \| record \| bytes \| record-data \|/);
    expect(md).toMatch(/\| 39 \| 128, only when status is 0, 1, 2 or 3 \| record \| bytes \| record-data \|/);
  });
});
