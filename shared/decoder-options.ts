import type { CaptureSettings } from './schemas';
import type { DecoderOptions } from './decoder';

/** The capture's channel-role settings as the decoder takes them. */
export function decoderOptions(s: CaptureSettings): DecoderOptions {
  return {
    format: s.format,
    sampleRate: s.sampleRate ?? undefined,
    channelNames: s.channelNames.length > 0 ? s.channelNames : undefined,
    rawWidth: s.rawWidth,
    clock: s.clock ?? undefined,
    data: s.links.map((l) => l.channel),
    handshake: s.handshake.map((h) => h.channel),
    edge: s.edge,
    encoding: s.encoding,
    invert: s.invert,
    bitRate: s.bitRate ?? undefined,
    fcs: s.fcs,
  };
}
