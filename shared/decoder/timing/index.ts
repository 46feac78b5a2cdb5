// Line timing: the server's schedule (visits, rounds, waits), service statistics per station,
// the schedule view's lanes with level of detail, the clock's period spread and the budget line.
export * from './budget';
export * from './clock-spread';
export * from './line-timing';
export * from './schedule-window';
export * from './span-columns';
export * from './stats';
export * from './tap';
