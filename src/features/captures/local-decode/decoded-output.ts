// Where the worker keeps the decoded-capture file while it grows. In the origin-private file
// system when the browser offers sync access handles (a dedicated worker's API): the lines go to
// disk and the finished file is a Blob over that disk file, so the tab's memory does not grow with
// the output (a busy 1 GB capture gives about 160 MB of lines). Elsewhere: Blobs in memory.

const PREFIX = 'decoded-';

export interface DecodedOutput {
  write(text: string): void;
  /** the whole file: the header (known only at the end), the lines written, the end line */
  finish(header: string, end: string, type: string): Promise<Blob>;
}

class MemoryOutput implements DecodedOutput {
  private readonly parts: Blob[] = [];
  write(text: string): void {
    this.parts.push(new Blob([text]));
  }
  finish(header: string, end: string, type: string): Promise<Blob> {
    return Promise.resolve(new Blob([header, ...this.parts, end], { type }));
  }
}

class DiskOutput implements DecodedOutput {
  private at = 0;
  private buffer = new Uint8Array(1 << 20);
  private readonly utf8 = new TextEncoder();
  constructor(
    private readonly handle: FileSystemFileHandle,
    private readonly access: FileSystemSyncAccessHandle,
  ) {}
  write(text: string): void {
    if (text.length * 3 > this.buffer.length) this.buffer = new Uint8Array(text.length * 3);
    const { written } = this.utf8.encodeInto(text, this.buffer);
    this.at += this.access.write(this.buffer.subarray(0, written), { at: this.at });
  }
  async finish(header: string, end: string, type: string): Promise<Blob> {
    this.access.flush();
    this.access.close();
    return new Blob([header, await this.handle.getFile(), end], { type });
  }
}

/** Opens the output, removing what earlier decodes in this origin left behind. */
export async function openDecodedOutput(): Promise<DecodedOutput> {
  try {
    const root = await navigator.storage.getDirectory();
    for await (const name of (root as unknown as { keys(): AsyncIterable<string> }).keys()) {
      if (name.startsWith(PREFIX)) await root.removeEntry(name).catch(() => undefined);
    }
    const handle = await root.getFileHandle(`${PREFIX}${crypto.randomUUID()}.ndjson`, { create: true });
    const access = await (handle as unknown as { createSyncAccessHandle(): Promise<FileSystemSyncAccessHandle> }).createSyncAccessHandle();
    return new DiskOutput(handle, access);
  } catch {
    return new MemoryOutput();
  }
}
