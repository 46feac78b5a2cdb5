// The decoder's public API: one pipeline (createDecoder) and the stages it is made of.
export * from './types';
export { createDecoder, type Decoder, type DecoderOptions } from './pipeline';
export { Deframer, type DeframerOptions, type DeframerSink } from './deframe';
export { checkFrame, type CheckOptions } from './check';
export { decodeLink, uCommandName } from './link';
export {
  FCS16_GOOD_RESIDUE,
  FCS32_GOOD_RESIDUE,
  fcs16,
  fcs16Good,
  fcs16Package,
  fcs16Register,
  fcs32,
  locateSingleBitError16,
  locateSingleBitError32,
} from './fcs';
export { BitRecovery } from './bits';
export { ClockedRawBits } from './raw-clocked';
export { TimeOrder } from './time-order';
export { createReader } from './readers';
export { detectFormat } from './readers/detect';
// What a capture reveals about itself: settings finder, link directions, station roster, field hints.
export * from './finder';
export * from './hints';
