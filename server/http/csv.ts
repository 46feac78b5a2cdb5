/**
 * One CSV cell (RFC 4180 quoting) that a spreadsheet opens as plain text. Following the OWASP
 * "CSV Injection" guidance, a text cell starting with =, +, -, @, tab or carriage return — which
 * spreadsheets read as a formula — gets a leading single quote, and a cell with a quote, comma or
 * line break is wrapped in double quotes with its quotes doubled. Numbers are written as they
 * are: they come from the decoder, never from a person, and "-3" must stay a number.
 */
export function csvCell(value: unknown): string {
  if (value === null || value === undefined) return '';
  if (typeof value === 'number' || typeof value === 'boolean' || typeof value === 'bigint') return String(value);
  let s = Array.isArray(value) ? value.join(' ') : String(value);
  if (/^[=+\-@\t\r]/.test(s)) s = `'${s}`;
  return /[",\n\r]/.test(s) ? `"${s.replace(/"/g, '""')}"` : s;
}
