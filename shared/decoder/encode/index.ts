// The decoder's own encoder (a sub-entry of the decoder): line bits, waveforms and capture-format
// writers made from a script of frames. For tests, benchmarks and the demo samples only; the app
// never ships it.
export * from './calls';
export * from './episodes';
export * from './ledger-envelope';
export * from './line-bits';
export * from './waveform';
export * from './writers';
