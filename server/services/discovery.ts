// The settings finder over a stored capture file: the finder reads at most its budget (16 MB by
// default) from the head and from windows spread over the file, then infers link directions and
// the station roster from the frames of the best setting. No database here: a route passes the
// capture's path, the rig's field map and any settings the analyst already fixed.
import fs from 'node:fs/promises';
import { discover, type CaptureSource, type Discovery, type DiscoverOptions, type FinderProgress } from '../../shared/decoder/finder';

/** A capture file as the finder reads it: positioned reads, no whole-file buffering. */
export async function openFileSource(path: string): Promise<CaptureSource & { close(): Promise<void> }> {
  const handle = await fs.open(path, 'r');
  const { size } = await handle.stat();
  return {
    size,
    async read(offset: number, length: number) {
      const buf = Buffer.alloc(Math.max(0, Math.min(length, size - offset)));
      const { bytesRead } = await handle.read(buf, 0, buf.length, offset);
      return new Uint8Array(buf.buffer, buf.byteOffset, bytesRead);
    },
    close: () => handle.close(),
  };
}

/** Finds the settings, directions and roster of a capture file. */
export async function discoverCaptureFile(path: string, options: DiscoverOptions = {}, onProgress?: (p: FinderProgress) => void): Promise<Discovery> {
  const source = await openFileSource(path);
  try {
    return await discover(source, options, onProgress);
  } finally {
    await source.close();
  }
}
