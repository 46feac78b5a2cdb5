// The decode worker lowers its own thread's CPU priority, so that on a busy machine the request
// thread wins the CPU and a long decode only takes what is left over. On Linux a nice value
// belongs to a thread (setpriority with a thread id); the kernel's autogroup puts every thread
// of the server in one group, so the nice value weighs the worker against the request thread.
import fs from 'node:fs';
import os from 'node:os';

export const DEFAULT_DECODE_NICE = 10;

/**
 * FLAGLINE_DECODE_NICE: 0–19, default 10; anything else keeps the default. Under vitest the
 * default is 0: tests wait on a run's stages, and a starved worker on a busy machine stretches
 * windows some tests do not expect (a run done but still building its search index).
 */
export function decodeNice(): number {
  const raw = process.env.FLAGLINE_DECODE_NICE?.trim();
  if (!raw || !/^\d+$/.test(raw)) return process.env.VITEST ? 0 : DEFAULT_DECODE_NICE;
  return Math.min(19, Number(raw));
}

/** The calling thread's kernel id (Linux: /proc/thread-self links to PID/task/TID), or null elsewhere. */
export function threadId(): number | null {
  try {
    const tid = Number(fs.readlinkSync('/proc/thread-self').split('/').pop());
    return Number.isInteger(tid) && tid > 0 ? tid : null;
  } catch {
    return null;
  }
}

/**
 * Sets the calling thread's nice value, raising it only (an unprivileged process cannot lower one).
 * Returns the value set, or null where threads have no priority of their own (not Linux) or the
 * call is refused; the caller goes on at its current priority either way.
 */
export function lowerThreadPriority(nice: number): number | null {
  const tid = threadId();
  if (tid === null || nice <= 0) return null;
  try {
    if (os.getPriority(tid) >= nice) return null;
    os.setPriority(tid, nice);
    return nice;
  } catch {
    return null;
  }
}

/**
 * Names the calling thread (Linux: /proc/thread-self/comm, 15 characters at most), so that tools
 * and the load benchmark can tell the server's threads apart; nothing elsewhere.
 */
export function nameThread(name: string): void {
  try {
    fs.writeFileSync('/proc/thread-self/comm', name.slice(0, 15));
  } catch {
    // not Linux, or /proc is not writable: the name is only for people looking
  }
}
