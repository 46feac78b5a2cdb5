import type { z } from 'zod';
import { ApiError } from './api';

/** Per-field messages keyed by the field's dotted path, the same keys the server sends in `fields`. */
export type FieldErrors = Record<string, string>;

/** Reads a form's named controls into an object; dotted names ("lineSettings.bitRate") nest. */
export function readForm(form: HTMLFormElement): Record<string, unknown> {
  const result: Record<string, unknown> = {};
  for (const [name, value] of new FormData(form)) {
    if (typeof value !== 'string') continue;
    const path = name.split('.');
    let target = result;
    for (const key of path.slice(0, -1)) {
      if (typeof target[key] !== 'object' || target[key] === null) target[key] = {};
      target = target[key] as Record<string, unknown>;
    }
    target[path[path.length - 1]] = value;
  }
  return result;
}

export type Parsed<T> = { ok: true; data: T } | { ok: false; errors: FieldErrors };

/** Validates with the shared schema and turns issues into one message per field. */
export function parseWith<S extends z.ZodType>(schema: S, values: unknown): Parsed<z.output<S>> {
  const result = schema.safeParse(values);
  if (result.success) return { ok: true, data: result.data };
  const errors: FieldErrors = {};
  for (const issue of result.error.issues) {
    const key = issue.path.map(String).join('.') || '_form';
    errors[key] ??= issue.message;
  }
  return { ok: false, errors };
}

/** The server's 400 `fields`, for showing beside the same inputs the client validates. */
export function serverFieldErrors(error: unknown): FieldErrors {
  return error instanceof ApiError ? error.fields : {};
}
