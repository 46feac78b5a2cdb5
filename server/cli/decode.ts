// `npm run --silent decode -- <capture> [options]`: decodes a capture file to NDJSON on stdout,
// one frame per line in time order, with a summary on stderr. Bad input exits with code 2 and
// one message naming the position in the file and what was expected there.
// Settings left out are found by the settings finder (--settings auto, the default when the data
// channel or the encoding is not given); its choice and the runner-up go to stderr.
import { closeSync, openSync, readSync, statSync, writeSync } from 'node:fs';
import { parseArgs } from 'node:util';
import { decoderOptionsOf, discoveryOf, findSettings, type FinderOptions, type FinderResult } from '../../shared/decoder/finder';
import { createDecoder, type DecoderOptions, DecodeError, type DecodeIssue, type FrameStatus } from '../../shared/decoder';
import { openFileSource } from '../services/discovery';
import { NdjsonWriter, seconds } from './ndjson-writer';

const USAGE = `usage: npm run --silent decode -- <capture> [options]
  --format auto|vcd|csv|raw|octets|framelog   capture format (default auto: detected from the content)
  --sample-rate <Hz>        samples per second (raw binary; CSV with a sample-index column)
  --channels <name,...>     names of raw-binary bits 0,1,2...
  --raw-width 1|2           raw binary bytes per sample (default 1)
  --clock <channel>         clock channel (omit to recover the clock from the data)
  --data <channel>[,...]    data channel(s), one link each
  --handshake <channel,...> handshake lines reported as line events
  --bit-rate <bit/s>        nominal bit rate (needed without a clock)
  --edge rising|falling     clock edge the data is sampled on (default rising)
  --encoding nrz|nrzi       line coding (default nrz)
  --invert                  data lines are inverted
  --fcs 16|32               FCS width (default 16)
  --settings auto|given     auto: the settings finder finds what is left out (clock, edge, data
                            channels, encoding, polarity, FCS width, bit rate without a clock)
                            from trial decodes of the capture's head; given: defaults as above.
                            Default: auto when --data or --encoding is left out
  --explain                 with auto: print the finder's whole ranking, what it tried, and the
                            link directions and stations it inferred (stderr)
  --events                  also print line events (idle, fill flags, handshake changes)
  --lenient                 skip lines or cells that cannot be read (they are listed as warnings)
                            instead of failing with exit code 2`;

class UsageError extends Error {}

interface Cli {
  file: string;
  options: DecoderOptions;
  /** what the user gave, for the finder (everything else is tried) */
  given: FinderOptions;
  auto: boolean;
  explain: boolean;
  events: boolean;
  lenient: boolean;
}

/** Numbers like 800000, 800e3, 800k, 24M. */
function rate(value: string | undefined, what: string): number | undefined {
  if (value === undefined) return undefined;
  const m = /^([0-9]*\.?[0-9]+(?:e[+-]?[0-9]+)?)\s*([kKmMgG]?)(?:hz|Hz|b\/s|bps)?$/.exec(value.trim());
  const scale = m ? ({ '': 1, k: 1e3, K: 1e3, m: 1e6, M: 1e6, g: 1e9, G: 1e9 } as Record<string, number>)[m[2]] : 0;
  const n = m ? Number(m[1]) * scale : NaN;
  if (!(n > 0) || !Number.isFinite(n)) throw new UsageError(`${what} must be a positive number (e.g. 800000 or 800k), got "${value}"`);
  return n;
}

function oneOf<T extends string>(value: string | undefined, allowed: readonly T[], what: string): T | undefined {
  if (value === undefined) return undefined;
  if (!(allowed as readonly string[]).includes(value)) throw new UsageError(`${what} must be one of ${allowed.join(', ')}, got "${value}"`);
  return value as T;
}

function list(value: string | undefined): string[] | undefined {
  if (value === undefined) return undefined;
  const items = value.split(',').map((s) => s.trim());
  if (items.some((s) => s === '')) throw new UsageError(`empty channel name in "${value}"`);
  return items;
}

function parse(argv: string[]): Cli {
  let parsed;
  try {
    parsed = parseArgs({
      args: argv,
      allowPositionals: true,
      strict: true,
      options: {
        format: { type: 'string' },
        'sample-rate': { type: 'string' },
        channels: { type: 'string' },
        'raw-width': { type: 'string' },
        clock: { type: 'string' },
        data: { type: 'string' },
        handshake: { type: 'string' },
        'bit-rate': { type: 'string' },
        edge: { type: 'string' },
        encoding: { type: 'string' },
        invert: { type: 'boolean' },
        fcs: { type: 'string' },
        settings: { type: 'string' },
        explain: { type: 'boolean' },
        events: { type: 'boolean' },
        lenient: { type: 'boolean' },
        help: { type: 'boolean', short: 'h' },
      },
    });
  } catch (e) {
    throw new UsageError((e as Error).message);
  }
  const v = parsed.values;
  if (v.help) {
    process.stdout.write(USAGE + '\n');
    process.exit(0);
  }
  if (parsed.positionals.length !== 1) throw new UsageError(parsed.positionals.length === 0 ? 'give the capture file to decode' : `give one capture file, got ${parsed.positionals.length}`);
  const width = oneOf(v['raw-width'], ['1', '2'] as const, '--raw-width');
  const fcs = oneOf(v.fcs, ['16', '32'] as const, '--fcs');
  const format = oneOf(v.format, ['auto', 'vcd', 'csv', 'raw', 'octets', 'framelog'] as const, '--format') ?? 'auto';
  const edge = oneOf(v.edge, ['rising', 'falling'] as const, '--edge');
  const encoding = oneOf(v.encoding, ['nrz', 'nrzi'] as const, '--encoding');
  const data = list(v.data);
  const mode = oneOf(v.settings, ['auto', 'given'] as const, '--settings') ?? (data === undefined || encoding === undefined ? 'auto' : 'given');
  if (v.explain && mode !== 'auto') throw new UsageError('--explain shows what the settings finder did: use it with --settings auto');
  const given: FinderOptions = {
    format: format === 'auto' ? undefined : format,
    sampleRate: rate(v['sample-rate'], '--sample-rate'),
    channelNames: list(v.channels),
    rawWidth: width ? (Number(width) as 1 | 2) : undefined,
    clock: v.clock,
    data,
    bitRate: rate(v['bit-rate'], '--bit-rate'),
    edge,
    encoding,
    invert: v.invert === true ? true : undefined,
    fcs: fcs ? (Number(fcs) as 16 | 32) : undefined,
  };
  return {
    file: parsed.positionals[0],
    events: v.events === true,
    lenient: v.lenient === true,
    auto: mode === 'auto',
    explain: v.explain === true,
    given,
    options: {
      format,
      sampleRate: given.sampleRate,
      channelNames: given.channelNames,
      rawWidth: given.rawWidth,
      clock: v.clock,
      data,
      handshake: list(v.handshake),
      bitRate: given.bitRate,
      edge: edge ?? 'rising',
      encoding: encoding ?? 'nrz',
      invert: v.invert === true,
      fcs: given.fcs ?? 16,
    },
  };
}

/** the CLI option behind each setting a DecodeIssue can name */
const OPTION_OF: Record<string, string> = {
  data: '--data',
  bitRate: '--bit-rate',
  sampleRate: '--sample-rate',
  clock: '--clock',
  handshake: '--handshake',
};

/** where the problem is: a place in the file, or the option to give (a setting has no place) */
function position(issue: DecodeIssue): string {
  if (issue.setting) return `option ${OPTION_OF[issue.setting] ?? issue.setting}`;
  return issue.line !== undefined ? `line ${issue.line} (byte ${issue.offset})` : `byte ${issue.offset}`;
}

function failInput(file: string, issue: DecodeIssue): never {
  const hint = issue.skipped ? ' Run with --lenient to decode the rest of the file anyway.' : '';
  const where = issue.setting ? `${position(issue)}` : `at ${position(issue)}`;
  process.stderr.write(`decode: ${file}: ${where}: expected ${issue.expected}. ${issue.message}${hint}\n`);
  process.exit(2);
}

/**
 * Runs the settings finder and fills in what the user left out. Prints the choice and the
 * runner-up (one line each), and with --explain the whole ranking. When no setting decodes a
 * good frame it returns what was tried and what to check, for the summary.
 */
async function findMissing(cli: Cli): Promise<string[]> {
  const source = await openFileSource(cli.file);
  let result: FinderResult;
  let finder;
  try {
    ({ result, finder } = await findSettings(source, cli.given));
  } finally {
    await source.close();
  }
  const out = process.stderr;
  const best = result.best;
  if (cli.explain) {
    out.write(`decode: settings finder read ${(result.bytesRead / 1e6).toFixed(2)} MB in ${result.windows.length} window(s)${result.lineSeconds !== null ? `, ${result.lineSeconds.toPrecision(3)} s of line time` : ''}; tried:\n`);
    for (const t of result.tried) out.write(`  ${t}\n`);
    out.write('decode: ranking, best first:\n');
    result.ranking.forEach((c, i) => {
      out.write(`  ${String(i + 1).padStart(2)}. ${c.evidence}\n`);
      for (const n of c.notes) out.write(`      ${n}\n`);
    });
  }
  const advice = best ? [] : [`the settings finder: ${result.summary}`, ...result.advice, `tried: ${result.tried.join('; ')}`, ...result.cautions.map((c) => `caution: ${c}`)];
  // Nothing good: the setting that found the most frames is decoded anyway (its frames show what
  // the line carries), or, when a reader problem stopped the finder, the settings as given, so
  // the problem gets its own message with its position. The advice joins the summary.
  const chosen = best ?? (result.issues.length === 0 ? result.ranking[0] : undefined);
  if (!chosen) return advice;
  if (best) {
    out.write(`decode: settings found: ${best.evidence}\n`);
    out.write(`decode: runner-up: ${result.runnerUp ? result.runnerUp.evidence : 'none'}\n`);
  }
  if (cli.explain && best) {
    const d = discoveryOf(finder, result, cli.given);
    out.write('decode: link directions:\n');
    for (const v of d.directions) out.write(`  ${v.link}: ${v.direction}${v.station !== null ? `, station 0x${v.station.toString(16).padStart(2, '0')}` : ''} — ${v.reasons[0] ?? ''}\n`);
    out.write('decode: stations by address:\n');
    for (const s of d.roster) out.write(`  0x${s.address.toString(16).padStart(2, '0')}: ${s.frames} frames (${s.links.map((l) => `${l.link} ${l.frames}`).join(', ')}), ${s.firstSeconds.toPrecision(3)} s to ${s.lastSeconds.toPrecision(3)} s\n`);
  }
  const found = decoderOptionsOf(chosen, cli.given);
  const o = cli.options;
  cli.options = {
    ...o,
    format: found.format,
    rawWidth: o.rawWidth ?? found.rawWidth,
    clock: found.clock,
    data: o.data ?? found.data,
    edge: found.edge,
    encoding: found.encoding,
    invert: found.invert,
    fcs: found.fcs,
    bitRate: o.bitRate ?? found.bitRate,
  };
  return advice;
}

async function main(): Promise<void> {
  let cli: Cli;
  try {
    cli = parse(process.argv.slice(2));
  } catch (e) {
    if (e instanceof UsageError) {
      process.stderr.write(`decode: ${e.message} (see --help)\n`);
      process.exit(2);
    }
    throw e;
  }
  const { file } = cli;
  let size: number;
  try {
    const st = statSync(file);
    if (!st.isFile()) throw Object.assign(new Error('not a file'), { code: 'EISDIR' });
    size = st.size;
  } catch (e) {
    const code = (e as NodeJS.ErrnoException).code;
    const why = code === 'ENOENT' ? 'no such file' : code === 'EACCES' ? 'permission denied' : code === 'EISDIR' ? 'it is a directory' : (e as Error).message;
    process.stderr.write(`decode: cannot read ${file}: ${why}\n`);
    process.exit(2);
  }
  const advice = cli.auto && size > 0 ? await findMissing(cli) : [];
  const options = cli.options;

  const started = performance.now();
  const fcsDigits = options.fcs === 32 ? 8 : 4;
  const counts = new Map<string, Record<FrameStatus, number>>();
  let lastSample = 0;
  const out = new NdjsonWriter(writeOut, fcsDigits);
  // the writer is done with a frame when its line is written: frames may share their octets' buffers;
  // line events are only made when they are printed
  const decoder = createDecoder({ ...options, sharedFrameBytes: true, lineEvents: cli.events }, {
    frame(f) {
      let c = counts.get(f.link);
      if (!c) counts.set(f.link, (c = { ok: 0, 'bad-fcs': 0, abort: 0, short: 0, residue: 0 }));
      c[f.status]++;
      if (f.lastSample > lastSample) lastSample = f.lastSample;
      out.frame(f, decoder.samplePeriodSeconds ?? 0);
    },
    event(e) {
      if (cli.events) out.event(e, decoder.samplePeriodSeconds ?? 0);
    },
  });

  const stopIfFatal = () => {
    // a malformed part of the file is bad input for the CLI unless --lenient: scripts must not
    // take a partial decode for a whole one
    const issue = decoder.fatal() ?? (cli.lenient ? null : decoder.issues.find((i) => i.skipped) ?? null);
    if (issue) {
      out.flush();
      failInput(file, issue);
    }
  };

  // One synchronous pass through one reused buffer: the decoder keeps nothing of a chunk after push()
  let fd: number;
  try {
    fd = openSync(file, 'r');
  } catch (e) {
    process.stderr.write(`decode: cannot read ${file}: ${(e as Error).message}\n`);
    process.exit(2);
  }
  const chunk = new Uint8Array(CHUNK_BYTES);
  for (;;) {
    let n: number;
    try {
      n = readSync(fd, chunk, 0, chunk.length, null);
    } catch (e) {
      process.stderr.write(`decode: cannot read ${file}: ${(e as Error).message}\n`);
      process.exit(2);
    }
    if (n === 0) break;
    decoder.push(chunk.subarray(0, n));
    stopIfFatal();
    // what this chunk gave goes out now, so a reader of the output sees frames as they come
    out.flush();
  }
  closeSync(fd);
  decoder.finish();
  stopIfFatal();
  out.flush();
  const secs = (performance.now() - started) / 1000;
  const period = decoder.samplePeriodSeconds ?? 0;
  const lines = [`decode: ${file} (${decoder.format ?? 'unknown format'}): ${decoder.links.length} link(s), last frame ends at ${seconds(lastSample, period)} s`];
  for (const link of decoder.links) {
    const c = counts.get(link) ?? { ok: 0, 'bad-fcs': 0, abort: 0, short: 0, residue: 0 };
    const total = Object.values(c).reduce((a, b) => a + b, 0);
    lines.push(`  ${link}: ${total} frames — ok ${c.ok}, bad-fcs ${c['bad-fcs']}, abort ${c.abort}, short ${c.short}, residue ${c.residue}`);
  }
  const ok = [...counts.values()].reduce((n, c) => n + c.ok, 0);
  if (ok === 0) for (const a of advice) lines.push(`  ${a}`);
  const issues = decoder.issues;
  for (const issue of issues.slice(0, 5)) lines.push(`  warning at ${position(issue)}: ${issue.message}`);
  if (issues.length > 5) lines.push(`  … and ${issues.length - 5} more warnings`);
  lines.push(`  read ${(size / 1e6).toFixed(1)} MB in ${secs.toFixed(2)} s (${(size / 1e6 / Math.max(secs, 1e-9)).toFixed(1)} MB/s)`);
  process.stderr.write(lines.join('\n') + '\n');
}

const CHUNK_BYTES = 1 << 20;
const pause = new Int32Array(new SharedArrayBuffer(4));

/**
 * Writes all of `bytes` to stdout before returning (the NDJSON writer reuses its buffer). A pipe
 * may be non-blocking: a full one is waited on. When the reader of the output went away
 * (e.g. `| head`), the process stops quietly.
 */
function writeOut(bytes: Uint8Array): void {
  let at = 0;
  while (at < bytes.length) {
    try {
      at += writeSync(1, bytes, at, bytes.length - at);
    } catch (e) {
      const code = (e as NodeJS.ErrnoException).code;
      if (code === 'EAGAIN') {
        Atomics.wait(pause, 0, 0, 1);
        continue;
      }
      if (code === 'EPIPE') process.exit(0);
      process.stderr.write(`decode: cannot write output: ${(e as Error).message}\n`);
      process.exit(1);
    }
  }
}

/** Ends the process with one line instead of a stack trace, for throws in any callback. */
function reportThrown(e: unknown): never {
  if (e instanceof DecodeError) {
    process.stderr.write(`decode: ${e.issue.setting ? '' : 'at '}${position(e.issue)}: expected ${e.issue.expected}. ${e.issue.message}\n`);
    process.exit(2);
  }
  process.stderr.write(`decode: internal error: ${(e as Error)?.message ?? String(e)}\n`);
  process.exit(1);
}

process.on('uncaughtException', reportThrown);
main().catch(reportThrown);
