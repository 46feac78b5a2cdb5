export * from './common';
export * from './auth';
export * from './rigs';
export * from './captures';
export * from './calls';
export * from './notes';
export * from './faults';
export * from './timing';
