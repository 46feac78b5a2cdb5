// `npm run bench -- --memory [MB]`: peak memory of the browser's decode worker on a large local
// file. The worker (src/features/captures/local-decode/decode.worker.ts) is bundled alone and run in
// Chromium from a bare page on a local HTTP server, on a raw capture in a temp folder; the RSS of
// Chromium's processes comes from /proc while it runs (performance.measureUserAgentSpecificMemory
// needs cross-origin isolation and reports the JavaScript heap only).
import { readdirSync, readFileSync, writeFileSync } from 'node:fs';
import { createServer } from 'node:http';
import type { AddressInfo } from 'node:net';
import { join } from 'node:path';
import type { CaptureSettings } from '../../shared/schemas';

export interface WorkerMemory {
  secs: number;
  frames: number;
  /** seconds from the start to the first frames on the page */
  firstFramesSecs: number | null;
  /** the decoded-capture file the worker produced */
  decodedBytes: number;
  /** the renderer process the page and its worker run in */
  rendererPeakMb: number;
  /** every Chromium process at the moment their sum peaked (browser, renderer, utility, …) */
  totalPeakMb: number;
}

const PAGE = `<!doctype html><meta charset="utf-8"><title>worker memory</title><input type="file" id="f">`;

function descendants(root: number): number[] {
  const parent = new Map<number, number>();
  for (const name of readdirSync('/proc')) {
    if (!/^\d+$/.test(name)) continue;
    try {
      const stat = readFileSync(`/proc/${name}/stat`, 'utf8');
      parent.set(Number(name), Number(stat.slice(stat.lastIndexOf(')') + 2).split(' ')[1]));
    } catch {
      // gone meanwhile
    }
  }
  const out: number[] = [];
  const isBelow = (pid: number): boolean => {
    for (let p = parent.get(pid); p !== undefined && p > 1; p = parent.get(p)) if (p === root) return true;
    return false;
  };
  for (const pid of parent.keys()) if (isBelow(pid)) out.push(pid);
  return out;
}

function statusKb(pid: number, field: 'VmRSS' | 'VmHWM'): number {
  try {
    const m = new RegExp(`${field}:\\s+(\\d+)`).exec(readFileSync(`/proc/${pid}/status`, 'utf8'));
    return m ? Number(m[1]) : 0;
  } catch {
    return 0;
  }
}

function isRenderer(pid: number): boolean {
  try {
    return readFileSync(`/proc/${pid}/cmdline`, 'utf8').includes('--type=renderer');
  } catch {
    return false;
  }
}

export async function measureBrowserWorker(file: string, settings: CaptureSettings, dir: string): Promise<WorkerMemory> {
  const { buildSync } = await import('esbuild');
  const workerJs = join(dir, 'decode-worker.js');
  buildSync({ entryPoints: [join(process.cwd(), 'src/features/captures/local-decode/decode.worker.ts')], bundle: true, platform: 'browser', format: 'esm', outfile: workerJs, logLevel: 'warning' });
  writeFileSync(join(dir, 'page.html'), PAGE);
  const server = createServer((req, res) => {
    if (req.url === '/decode-worker.js') {
      res.writeHead(200, { 'content-type': 'text/javascript' });
      res.end(readFileSync(workerJs));
    } else {
      res.writeHead(200, { 'content-type': 'text/html' });
      res.end(PAGE);
    }
  });
  await new Promise<void>((r) => server.listen(0, '127.0.0.1', r));
  // loaded here, not at the top: the bench's bundled stage runs (in a temp folder) must not need it
  const { chromium } = await import('playwright-core');
  const browser = await chromium.launch({
    executablePath: '/usr/bin/chromium',
    args: ['--headless', '--no-sandbox', '--disable-gpu', '--disable-background-networking', '--disable-component-update', '--disable-sync'],
  });
  let rendererPeakKb = 0;
  let totalPeakKb = 0;
  const sample = () => {
    let total = 0;
    for (const pid of descendants(process.pid)) {
      const rss = statusKb(pid, 'VmRSS');
      total += rss;
      if (isRenderer(pid)) rendererPeakKb = Math.max(rendererPeakKb, statusKb(pid, 'VmHWM'));
    }
    totalPeakKb = Math.max(totalPeakKb, total);
  };
  const timer = setInterval(sample, 100);
  try {
    const page = await browser.newPage();
    await page.goto(`http://127.0.0.1:${(server.address() as AddressInfo).port}/`);
    await page.locator('#f').setInputFiles(file);
    const t0 = performance.now();
    const r = await page.evaluate(
      (settings) =>
        new Promise<{ frames: number; size: number; firstFrames: number | null } | { error: string }>((resolve) => {
          const input = document.getElementById('f') as HTMLInputElement;
          const w = new Worker('/decode-worker.js', { type: 'module' });
          const t0 = performance.now();
          let firstFrames: number | null = null;
          w.onmessage = (e: MessageEvent<{ type: string; result?: { frames: number; file: Blob }; error?: string }>) => {
            if (e.data.type === 'frames') firstFrames ??= (performance.now() - t0) / 1000;
            if (e.data.type === 'done') resolve({ frames: e.data.result!.frames, size: e.data.result!.file.size, firstFrames });
            if (e.data.type === 'failed') resolve({ error: e.data.error! });
          };
          w.onerror = (e) => resolve({ error: e.message });
          w.postMessage({ type: 'decode', file: input.files![0], settings });
        }),
      settings,
    );
    const secs = (performance.now() - t0) / 1000;
    sample();
    if ('error' in r) throw new Error(`the browser worker failed: ${r.error} (renderer peak ${(rendererPeakKb / 1024).toFixed(0)} MB)`);
    return { secs, frames: r.frames, firstFramesSecs: r.firstFrames, decodedBytes: r.size, rendererPeakMb: rendererPeakKb / 1024, totalPeakMb: totalPeakKb / 1024 };
  } finally {
    clearInterval(timer);
    await browser.close();
    server.close();
  }
}
