import type { CaptureFormat, CaptureReader, FrameLogSink, LineBitSink, ReaderOptions, TransitionSink } from '../types';
import { CsvReader } from './csv';
import { FrameLogReader } from './framelog';
import { OctetReader } from './octets';
import { RawReader } from './raw';
import { VcdReader } from './vcd';

export { checkHead, detectFormat, inspectHead } from './detect';
export type { HeadChannel, HeadInspection } from './detect';
export { CsvReader, FrameLogReader, OctetReader, RawReader, VcdReader };
export { SAMPLE_COLUMN, TIME_COLUMN } from './csv';

/**
 * The reader for a format. vcd/csv/raw report to a TransitionSink, 'octets' to a LineBitSink,
 * 'framelog' to a FrameLogSink; the caller passes the sink that fits the format.
 */
export function createReader(
  format: CaptureFormat,
  opts: ReaderOptions,
  sink: TransitionSink | FrameLogSink | LineBitSink,
): CaptureReader {
  switch (format) {
    case 'vcd':
      return new VcdReader(opts, sink as TransitionSink);
    case 'csv':
      return new CsvReader(opts, sink as TransitionSink);
    case 'raw':
      return new RawReader(opts, sink as TransitionSink);
    case 'octets':
      return new OctetReader(opts, sink as LineBitSink);
    case 'framelog':
      return new FrameLogReader(opts, sink as FrameLogSink);
  }
}
