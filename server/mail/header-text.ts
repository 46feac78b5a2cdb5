/**
 * Text that may go into a mail header or a one-line spot of a message: control characters
 * (C0, DEL, C1 — CR and LF among them), line and paragraph separators and bidirectional
 * overrides become a space, so a rig or person named "x\r\nBcc: …" cannot add a header line or
 * fake lines in the body, and runs of white space collapse.
 */
export function headerText(s: string): string {
  return s
    .replace(/[\p{Cc}\u2028\u2029\u202a-\u202e\u2066-\u2069]+/gu, ' ')
    .replace(/\s+/g, ' ')
    .trim();
}
