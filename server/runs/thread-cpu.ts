// CPU time of the calling thread, for the ingest benchmark's phase split: process.cpuUsage()
// counts every thread of the process, and on a shared machine CPU time is the steady figure.
import fs from 'node:fs';

const TICKS_PER_SECOND = 100;

/** Milliseconds of CPU this thread has used (Linux /proc; NaN elsewhere). Resolution 10 ms. */
export function threadCpuMs(): number {
  try {
    const stat = fs.readFileSync('/proc/thread-self/stat', 'utf8');
    // fields after the command name (which may hold spaces) start after the last ')'
    const fields = stat.slice(stat.lastIndexOf(')') + 2).split(' ');
    // utime and stime are fields 14 and 15 of the line, 12 and 13 after the name
    return ((Number(fields[11]) + Number(fields[12])) * 1000) / TICKS_PER_SECOND;
  } catch {
    return NaN;
  }
}
