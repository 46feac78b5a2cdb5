import { describe, expect, it } from 'vitest';
import { thinRoundStarts } from '../../server/services/timing/window-size';

// What the schedule answer sends of a window's round starts: at most one tick per pixel, x to a
// hundredth of a pixel (the canvas draws whole pixels).
describe('round ticks of a schedule window', () => {
  it('keeps one tick per pixel of 25 000 round starts across 861 px', () => {
    const xs = Array.from({ length: 25_000 }, (_, i) => (i * 861) / 25_000);
    const thin = thinRoundStarts(xs);
    expect(thin.length).toBeLessThanOrEqual(861);
    expect(thin.length).toBeGreaterThan(800);
    for (let i = 1; i < thin.length; i++) expect(thin[i] - thin[i - 1]).toBeGreaterThanOrEqual(0.99);
  });

  it('keeps every tick when they are a pixel or more apart, rounded to 0.01 px', () => {
    expect(thinRoundStarts([0.123456, 1.5, 2.5, 10.009])).toEqual([0.12, 1.5, 2.5, 10.01]);
  });

  it('drops a tick under a pixel after the last one kept, not after the last one dropped', () => {
    expect(thinRoundStarts([0, 0.6, 1.2, 1.8])).toEqual([0, 1.2]);
  });
});
