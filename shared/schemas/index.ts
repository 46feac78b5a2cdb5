export * from './common';
export * from './auth';
export * from './rigs';
export * from './captures';
export * from './calls';
