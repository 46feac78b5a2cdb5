// Writers of every capture format the readers take, for tests, benchmarks and samples/.
// Each has a streaming generator (…Chunks) for big files and a whole-file form (…Bytes).
export { collect } from './collect';
export { csvBytes, csvChunks, type CsvWriterOptions } from './csv';
export { frameLogBytes, frameLogChunks, type FrameLogWriterOptions, type LoggedFrame } from './framelog';
export { octetsFromLineBits } from './octets';
export { rawBytes, rawChunks, type RawWriterOptions } from './raw';
export { identifierCode, vcdBytes, vcdChunks, type VcdWriterOptions } from './vcd';
