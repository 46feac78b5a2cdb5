import { describe, expect, it } from 'vitest';
import { TimeOrder, type DecodedFrame, type LineEvent } from '../../shared/decoder';

const frame = (link: string, firstSample: number) => ({ link, firstSample }) as DecodedFrame;

describe('TimeOrder', () => {
  it('holds frames until the watermark passes them and lets them out by first sample', () => {
    const out: string[] = [];
    const order = new TimeOrder({ frame: (f) => out.push(`${f.link}@${f.firstSample}`), event: (e: LineEvent) => out.push(`${e.kind}@${e.sample}`) });
    order.frame(frame('b', 30));
    order.frame(frame('a', 10));
    order.event({ link: 'a', channel: 'a', kind: 'idle', sample: 20 });
    order.release(15);
    expect(out).toEqual(['a@10']);
    order.frame(frame('a', 25));
    order.release(100);
    expect(out).toEqual(['a@10', 'idle@20', 'a@25', 'b@30']);
  });

  it('keeps memory bounded by letting the earliest out when too many are held', () => {
    const out: number[] = [];
    const order = new TimeOrder({ frame: (f) => out.push(f.firstSample), event: () => {} }, 3);
    for (const s of [5, 1, 4, 2, 3]) order.frame(frame('a', s));
    order.release(-1);
    expect(order.size).toBe(3);
    expect(out).toEqual([1, 2]);
    order.flush();
    expect(out).toEqual([1, 2, 3, 4, 5]);
  });
});
