import type { Transitions, TransitionSink } from '../types';

/** Transitions handed to a sink per call; the arrays are reused, so a sink copies what it keeps. */
export const BATCH_SIZE = 16384;

export function newTransitions(capacity = BATCH_SIZE): Transitions {
  return {
    channel: new Uint8Array(capacity),
    sample: new Float64Array(capacity),
    value: new Uint8Array(capacity),
    n: 0,
  };
}

/**
 * Buffers transitions and drops repeats of a channel's current value, so a reader can feed it
 * every value it parses. `end(sample)` writes the end-of-capture marker (see Transitions).
 */
export class TransitionBatch {
  readonly t: Transitions;
  /** current value per channel, 255 until the first value */
  readonly current: Uint8Array;
  private readonly capacity: number;

  constructor(
    private readonly sink: TransitionSink,
    channelCount: number,
    capacity = BATCH_SIZE,
  ) {
    this.t = newTransitions(capacity);
    this.capacity = capacity;
    this.current = new Uint8Array(Math.max(channelCount, 1)).fill(255);
  }

  /** records a value; returns true when it was a change (or the channel's first value) */
  set(channel: number, sample: number, value: number): boolean {
    if (this.current[channel] === value) return false;
    this.current[channel] = value;
    const t = this.t;
    const i = t.n;
    t.channel[i] = channel;
    t.sample[i] = sample;
    t.value[i] = value;
    t.n = i + 1;
    if (i + 1 >= this.capacity) this.flush();
    return true;
  }

  /** repeats every channel's value at the last sample the capture covers */
  end(lastSample: number): void {
    const t = this.t;
    for (let c = 0; c < this.current.length; c++) {
      const v = this.current[c];
      if (v === 255) continue;
      const i = t.n;
      t.channel[i] = c;
      t.sample[i] = lastSample;
      t.value[i] = v;
      t.n = i + 1;
      if (i + 1 === this.capacity) this.flush();
    }
    this.flush();
  }

  flush(): void {
    if (this.t.n > 0) {
      this.sink.transitions(this.t);
      this.t.n = 0;
    }
  }
}
