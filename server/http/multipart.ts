import { HttpError } from './errors';

/**
 * The multipart parser (busboy, under multer) reports a malformed body as a plain Error; these
 * are the client's fault, so they become 400 with a message saying what was wrong. Anything
 * else stays a server error.
 */
const MALFORMED: [RegExp, string][] = [
  [/^Multipart: Boundary not found$/, 'its Content-Type names no multipart boundary'],
  [/^Unexpected end of (form|file)$/, 'the body ends in the middle of a part (truncated)'],
  [/^Malformed part header$/, 'a part header is malformed'],
  [/^(Malformed content type|Missing Content-Type|Unsupported content type)/, 'its Content-Type is not multipart/form-data'],
  [/^Request (aborted|closed)$/, 'the upload stopped before the body was complete'],
];

export function multipartError(err: unknown): HttpError | null {
  const message = err instanceof Error ? err.message : '';
  for (const [pattern, reason] of MALFORMED) {
    if (pattern.test(message)) return new HttpError(400, `The upload is not a well-formed multipart/form-data body: ${reason}. Send the capture as one file in the multipart field "file"`);
  }
  return null;
}
