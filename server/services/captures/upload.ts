import fs from 'node:fs';
import { checkHead, detectFormat } from '../../../shared/decoder/readers';
import type { CaptureSummaryRow } from '../../../shared/schemas';
import { captures } from '../../db/schema';
import { HttpError } from '../../http/errors';
import type { CaptureDeps } from './deps';
import { toSummary } from './rows';

/** bytes of the head the format is detected from */
export const HEAD_BYTES = 64 * 1024;

export function readHead(filePath: string, bytes = HEAD_BYTES): Uint8Array {
  const fd = fs.openSync(filePath, 'r');
  try {
    const buf = Buffer.alloc(bytes);
    const n = fs.readSync(fd, buf, 0, bytes, 0);
    return new Uint8Array(buf.buffer, buf.byteOffset, n);
  } finally {
    fs.closeSync(fd);
  }
}

export interface UploadedFile {
  path: string;
  originalname: string;
}

/**
 * Takes a file multer wrote to the temp folder: refuses it (and deletes it) when it is no
 * capture, else stores it under its hash and records the capture.
 */
export async function storeUpload(deps: CaptureDeps, rigId: number, userId: number, file: UploadedFile): Promise<CaptureSummaryRow> {
  let adopted = false;
  try {
    const head = readHead(file.path);
    const detection = detectFormat(head);
    if (!detection.format) throw new HttpError(422, `This file is not a capture Flagline can read: ${detection.reason}`);
    const problem = checkHead(head, detection.format, head.length < HEAD_BYTES);
    if (problem) {
      const where = problem.line !== undefined ? `line ${problem.line}` : `byte ${problem.offset}`;
      throw new HttpError(422, `This ${detection.format === 'vcd' ? 'value change dump' : 'CSV table'} is malformed at ${where}: ${problem.message}`);
    }
    const { sha256, size } = await deps.store.adopt(file.path);
    adopted = true;
    const row = deps.db
      .insert(captures)
      .values({ rigId, name: file.originalname.slice(0, 255) || 'capture', size, sha256, format: detection.format, detectReason: detection.reason, uploadedBy: userId })
      .returning()
      .get();
    return toSummary(deps, row);
  } finally {
    if (!adopted) fs.rmSync(file.path, { force: true });
  }
}
