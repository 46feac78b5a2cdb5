// The call layer: field maps applied to information fields, request/response exchanges and
// recovered files.
export * from './field-map';
export * from './cpm-envelope';
export * from './apply';
export * from './exchanges';
export * from './files';
