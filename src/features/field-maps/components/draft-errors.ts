import type { FieldMapError } from '../../../../shared/decoder/calls';

/** Messages keyed by document path ("layouts[2].fields[3].length"). */
export type ErrorsByPath = Record<string, string>;

export function errorsByPath(errors: FieldMapError[]): ErrorsByPath {
  const out: ErrorsByPath = {};
  for (const e of errors) if (!(e.path in out)) out[e.path] = e.message;
  return out;
}

/** The server keys a saved document's problems as "document.<path>"; the editor works in document paths. */
export function serverFieldErrors(fields: Record<string, string>): ErrorsByPath {
  const out: ErrorsByPath = {};
  for (const [key, message] of Object.entries(fields)) {
    const path = key === 'document' ? '' : key.startsWith('document.') ? key.slice('document.'.length) : key;
    out[path] = message;
  }
  return out;
}

/** The errors under a prefix, with the rest of their path ("" for the prefix itself). */
export function errorsUnder(errors: ErrorsByPath, prefix: string): { rest: string; message: string }[] {
  const out: { rest: string; message: string }[] = [];
  for (const [path, message] of Object.entries(errors)) {
    if (path === prefix) out.push({ rest: '', message });
    else if (path.startsWith(`${prefix}.`)) out.push({ rest: path.slice(prefix.length + 1), message });
    else if (path.startsWith(`${prefix}[`)) out.push({ rest: path.slice(prefix.length), message });
  }
  return out;
}

/** The first message at or under `path` (e.g. "…length" also takes "…length.field"). */
export function errorAt(errors: ErrorsByPath, path: string): string | undefined {
  return errorsUnder(errors, path)[0]?.message;
}
