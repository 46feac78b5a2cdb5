import type { ErrorRequestHandler, RequestHandler } from 'express';
import type { z } from 'zod';
import type { ApiError } from '../../shared/schemas';

/** An error the API answers with its own status and message (the shape of shared/schemas ApiError). */
export class HttpError extends Error {
  constructor(
    readonly status: number,
    message: string,
    readonly fields?: Record<string, string>,
  ) {
    super(message);
    this.name = 'HttpError';
  }
}

export const badRequest = (message: string, fields?: Record<string, string>) => new HttpError(400, message, fields);
export const unauthorized = (message = 'Sign in to continue') => new HttpError(401, message);
export const forbidden = (message: string) => new HttpError(403, message);
export const notFound = (message: string) => new HttpError(404, message);
export const conflict = (message: string) => new HttpError(409, message);
export const gone = (message: string) => new HttpError(410, message);

/**
 * zod's default messages ("Invalid input: expected string, received undefined") are written for
 * developers; the form shows these to people, so the generic ones are reworded here. Messages the
 * shared schemas set themselves pass through untouched.
 */
function friendlyMessage(issue: z.core.$ZodIssue): string {
  if (issue.code === 'invalid_type' && /received undefined$/.test(issue.message)) return 'This field is required';
  if (issue.code === 'invalid_type' && issue.message.startsWith('Invalid input')) {
    return `Expected ${issue.expected === 'object' ? 'an object' : `a ${issue.expected}`}`;
  }
  if (issue.code === 'invalid_value' && issue.message.startsWith('Invalid option')) {
    return `Choose one of: ${issue.values.map(String).join(', ')}`;
  }
  if (issue.code === 'unrecognized_keys') return `Unknown field: ${issue.keys.join(', ')}`;
  return issue.message;
}

/** Turns a zod failure into 400 { error, fields: { 'lineSettings.bitRate': message } }. */
export function validationError(error: z.ZodError): HttpError {
  const fields: Record<string, string> = {};
  let rootMessage: string | undefined;
  for (const issue of error.issues) {
    const key = issue.path.map(String).join('.');
    const message = friendlyMessage(issue);
    if (key === '') rootMessage ??= message;
    else fields[key] ??= message;
  }
  if (rootMessage && Object.keys(fields).length === 0) {
    return badRequest(`The request body is malformed: ${rootMessage.toLowerCase()}`);
  }
  return badRequest('Some fields need attention', fields);
}

/** Parses with a shared schema or throws the 400 above. */
export function parseBody<S extends z.ZodType>(schema: S, body: unknown): z.output<S> {
  const result = schema.safeParse(body ?? undefined);
  if (!result.success) throw validationError(result.error);
  return result.data;
}

/** Route parameters that are ids: anything but a positive integer is an unknown id (404). */
export function parseId(value: unknown, what: string): number {
  const n = typeof value === 'string' && /^[1-9][0-9]{0,15}$/.test(value) ? Number(value) : NaN;
  if (!Number.isSafeInteger(n)) throw notFound(`No ${what} with id ${String(value)}`);
  return n;
}

export const apiNotFound: RequestHandler = (req, res) => {
  const body: ApiError = { error: `No API route ${req.method} ${req.originalUrl.split('?')[0]}` };
  res.status(404).json(body);
};

interface HttpLikeError {
  status?: number;
  statusCode?: number;
  type?: string;
  code?: string;
  expose?: boolean;
  message?: string;
}

/** The one error handler: maps everything to the ApiError shape; never sends a stack trace. */
export const errorHandler: ErrorRequestHandler = (err, req, res, _next) => {
  let status = 500;
  let body: ApiError = { error: 'Something went wrong on the server; the error was logged' };
  const e = err as HttpLikeError;
  if (err instanceof HttpError) {
    status = err.status;
    body = err.fields ? { error: err.message, fields: err.fields } : { error: err.message };
  } else if (e?.code === 'EBADCSRFTOKEN') {
    status = 403;
    body = { error: 'Missing or outdated security token (x-csrf-token); reload the page and try again' };
  } else if (e?.type === 'entity.parse.failed') {
    status = 400;
    body = { error: 'The request body is not valid JSON' };
  } else if (e?.type === 'entity.too.large') {
    status = 413;
    body = { error: 'The request body is too large' };
  } else if (typeof (e?.status ?? e?.statusCode) === 'number' && (e.status ?? e.statusCode)! < 500 && e.expose) {
    status = (e.status ?? e.statusCode)!;
    body = { error: e.message || 'The request was refused' };
  }
  if (status >= 500 && !(err instanceof HttpError)) console.error(`[flagline] ${req.method} ${req.originalUrl} failed:`, err);
  if (res.headersSent) return;
  res.status(status).json(body);
};
