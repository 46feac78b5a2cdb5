// Start-up of the compiled decode CLI, part of `npm run bench`: `node dist/server/decode.mjs --help`
// against a bare `node -e 0`, ten runs each after one warm-up (the file cache), median and best
// wall time, and median CPU time (user + system, from GNU time when installed: steadier than wall
// time on a shared machine). Target: the CLI answers within 150 ms; the bare node figures say how
// much of that is node itself.
import { spawnSync } from 'node:child_process';
import { existsSync, mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { ensureServerBuild } from './server-build.mjs';

export interface StartupRow {
  stage: string;
  target: string;
  note: string;
}

const RUNS = 10;

const GNU_TIME = '/usr/bin/time';

const median = (xs: number[]) => {
  const s = [...xs].sort((a, b) => a - b);
  return (s[(s.length - 1) >> 1] + s[s.length >> 1]) / 2;
};

function timeRuns(args: string[]): { median: number; best: number; cpu: number | null } {
  const wall: number[] = [];
  const cpu: number[] = [];
  const dir = mkdtempSync(join(tmpdir(), 'flagline-startup-'));
  const timeFile = join(dir, 'time');
  const timed = existsSync(GNU_TIME);
  try {
    for (let i = 0; i <= RUNS; i++) {
      const t0 = performance.now();
      const r = timed
        ? spawnSync(GNU_TIME, ['-f', '%U %S', '-o', timeFile, process.execPath, ...args], { stdio: 'ignore' })
        : spawnSync(process.execPath, args, { stdio: 'ignore' });
      if (r.status !== 0) throw new Error(`node ${args.join(' ')} exited with ${r.status}`);
      if (i === 0) continue;
      wall.push(performance.now() - t0);
      if (timed) {
        const [user, sys] = readFileSync(timeFile, 'utf8').trim().split('\n').pop()!.split(' ').map(Number);
        cpu.push((user + sys) * 1000);
      }
    }
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
  return { median: median(wall), best: Math.min(...wall), cpu: timed ? median(cpu) : null };
}

export async function benchStartup(): Promise<StartupRow[]> {
  const cli = fileURLToPath(await ensureServerBuild('decode'));
  const bare = timeRuns(['-e', '0']);
  const help = timeRuns([cli, '--help']);
  const ms = (n: number) => `${n.toFixed(0)} ms`;
  const cpu = (t: { cpu: number | null }) => (t.cpu === null ? '' : `, CPU ${ms(t.cpu)}`);
  return [
    {
      stage: 'CLI start-up (decode --help, compiled)',
      target: '< 150 ms',
      note: `wall median ${ms(help.median)}, best ${ms(help.best)} of ${RUNS}${cpu(help)}; bare node -e 0: median ${ms(bare.median)}, best ${ms(bare.best)}${cpu(bare)}`,
    },
  ];
}
