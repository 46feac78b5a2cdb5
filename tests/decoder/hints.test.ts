// Field hints on the built-in envelope's demo capture, and on frames made to show each shape.
import { describe, expect, it } from 'vitest';
import { validateFieldMap } from '../../shared/decoder/calls';
import { draftFieldMap, FieldHints, fieldHints, type FieldHint, type HintFrame, type HintReport } from '../../shared/decoder/hints';
import { decodeSample, sampleEntry } from './hints-helpers';

const group = (r: HintReport, direction: 'request' | 'response', selector: number | null) => r.groups.find((g) => g.direction === direction && g.selector === selector)!;
const hint = (r: HintReport, direction: 'request' | 'response', selector: number | null, pred: (h: FieldHint) => boolean) => group(r, direction, selector).hints.find(pred);

describe('field hints on the CP/M call envelope demo capture', () => {
  const { frames, links } = decodeSample(sampleEntry('wrenfield-session.framelog'));
  const report = fieldHints(frames, links);

  it('finds the call code: the first octet, with the answers’ response bit 0x80', () => {
    expect(report.selectorOffset).toBe(0);
    expect(report.responseMask).toBe(0x80);
    // BDOS read sequential (20) and its answer 20 | 0x80 (CP/M 2.2 function numbers, from memory)
    const read = report.calls.find((c) => c.selector === 20)!;
    expect(read.answerSelector).toBe(0x94);
    expect(read.file).toBe('read-sequential');
  });

  it('finds the tag: a per-station counter in requests that the answer repeats', () => {
    const tag = hint(report, 'request', null, (h) => h.role === 'tag')!;
    expect(tag).toMatchObject({ kind: 'counter', offset: 1 });
    expect(tag.counter).toEqual({ scope: 'exchange', acrossCalls: true }); // a retry repeats the tag
    const echo = hint(report, 'response', null, (h) => h.role === 'tag')!;
    expect(echo).toMatchObject({ kind: 'echo', offset: 1, echo: { requestOffset: 1 } });
    expect(echo.contradict).toBe(0);
    expect(echo.supporting.length).toBeGreaterThan(10);
  });

  it('finds the file name in the FCB, and in the boot call', () => {
    expect(hint(report, 'request', 15, (h) => h.kind === 'cpm-name')).toMatchObject({ offset: 4, role: 'file-name', type: 'cpm-name' });
    expect(hint(report, 'request', 0x70, (h) => h.kind === 'cpm-name')).toMatchObject({ offset: 3, role: 'file-name' });
  });

  it('finds the boot call’s record number: 16 bits, little-endian, echoed in the answer', () => {
    const rn = hint(report, 'request', 0x70, (h) => h.kind === 'record-number')!;
    expect(rn).toMatchObject({ offset: 14, length: 2, type: 'u16le', role: 'record-number' });
    expect(rn.number!.endian).toBe('little');
    const back = hint(report, 'response', 0xf0, (h) => h.role === 'record-number')!;
    expect(back).toMatchObject({ kind: 'echo', offset: 3, type: 'u16le' });
  });

  it('finds the 128-octet records at the end of read answers', () => {
    expect(hint(report, 'response', 0x94, (h) => h.kind === 'record')).toMatchObject({ offset: 39, length: 128, role: 'record-data', toEnd: true });
    expect(hint(report, 'response', 0xf0, (h) => h.kind === 'record')).toMatchObject({ offset: 5, role: 'record-data' });
  });

  it('finds the status: a small set of answer values, 0 the commonest', () => {
    const st = hint(report, 'response', null, (h) => h.role === 'status')!;
    expect(st.offset).toBe(2);
    expect(st.values![0].value).toBe(0);
  });

  it('starts a field map the editor accepts, with the hinted roles', () => {
    const doc = draftFieldMap(report);
    const v = validateFieldMap(doc);
    expect(v.ok, JSON.stringify(!v.ok && v.errors)).toBe(true);
    const boot = doc.layouts.find((l) => l.id === 'request-0x70')!;
    expect(boot.fields.map((f) => [f.id, f.offset, f.type, f.role])).toEqual([
      ['call', 0, 'u8', 'call'],
      ['tag', 1, 'u8', 'tag'],
      ['f2', 2, 'bytes', undefined],
      ['name', 3, 'cpm-name', 'file-name'],
      ['record', 14, 'u16le', 'record-number'],
    ]);
    expect(doc.callCode).toEqual({ offset: 0, type: 'u8', responseMask: 0x80 });
  });
});

/** hand-made frames: one request and one answer per step, station 1 */
function frames(n: number, request: (i: number) => number[], response: (i: number) => number[]): HintFrame[] {
  const out: HintFrame[] = [];
  for (let i = 0; i < n; i++) {
    out.push({ ref: { link: 'up', seq: i }, direction: 'request', station: 1, sample: i * 10, info: Uint8Array.from(request(i)) });
    out.push({ ref: { link: 'down', seq: i }, direction: 'response', station: 1, sample: i * 10 + 5, info: Uint8Array.from(response(i)) });
  }
  return out;
}

function run(list: HintFrame[]): HintReport {
  const e = new FieldHints();
  for (const f of list) e.push(f);
  return e.finish();
}

describe('field hints, shape by shape', () => {
  it('lists the frames that contradict a constant', () => {
    const r = run(frames(60, (i) => [7, i === 13 ? 0x55 : 0xaa, i], () => [7, 0]));
    const c = hint(r, 'request', null, (h) => h.kind === 'constant' && h.offset === 1)!;
    expect(c.support).toBe(59);
    expect(c.contradict).toBe(1);
    expect(c.contradicting).toEqual([{ link: 'up', seq: 13 }]);
    expect(c.supporting).toHaveLength(20);
  });

  it('tells a length octet that counts the rest of the frame, over several lengths', () => {
    const r = run(frames(30, (i) => [1, 2 + (i % 5), 0x10, ...Array(2 + (i % 5)).fill(0)].slice(0, 2 + 2 + (i % 5)), () => [1]));
    const len = hint(r, 'request', null, (h) => h.kind === 'length')!;
    expect(len).toMatchObject({ offset: 1, type: 'u8', role: 'length', lengthAdd: 0 });
  });

  it('reads a record number across 256 records as big-endian from the carry', () => {
    // requests of one file: name, then records 250 … 262 big-endian
    const name = [...'LOG     DAT'].map((c) => c.charCodeAt(0));
    const r = run(frames(13, (i) => [0x40, ...name, (250 + i) >> 8, (250 + i) & 0xff], (i) => [0x40, 0, (250 + i) >> 8, (250 + i) & 0xff]));
    const rn = hint(r, 'request', 0x40, (h) => h.kind === 'record-number')!;
    expect(rn).toMatchObject({ offset: 12, type: 'u16be', role: 'record-number' });
    expect(rn.summary).toMatch(/carrying into the next octet 1 time/);
    expect(hint(r, 'response', 0x40, (h) => h.role === 'record-number')).toMatchObject({ offset: 2, type: 'u16be' });
  });

  it('masks attribute bits when it reads a CP/M name and counts them', () => {
    const name = (i: number) => [...'REPORT  TXT'].map((c, k) => c.charCodeAt(0) | (k === 8 && i % 2 ? 0x80 : 0));
    const r = run(frames(10, (i) => [3, ...name(i)], () => [3, 0]));
    const h = hint(r, 'request', 3, (x) => x.kind === 'cpm-name')!;
    expect(h).toMatchObject({ offset: 1, attributes: 5 });
  });

  it('says why there is nothing to show when no answers were seen', () => {
    const e = new FieldHints();
    e.push({ ref: { link: 'up', seq: 0 }, direction: 'request', station: 1, sample: 0, info: Uint8Array.of(1, 2, 3) });
    expect(e.finish().notes[0]).toMatch(/Only requests were seen/);
    expect(new FieldHints().finish().notes[0]).toMatch(/No information frames/);
  });
});
