import { apiErrorSchema } from '../../shared/schemas';

/** An error answer from the API, carrying the server's message and per-field messages. */
export class ApiError extends Error {
  readonly status: number;
  readonly fields: Record<string, string>;

  constructor(status: number, message: string, fields: Record<string, string> = {}) {
    super(message);
    this.name = 'ApiError';
    this.status = status;
    this.fields = fields;
  }
}

/** Where the CSRF token lives (the session query); wired up once by the app. */
export interface CsrfTokenSource {
  get(): Promise<string>;
  /** fetches a fresh token, used once when the server rejects a stale one */
  refresh(): Promise<string>;
}

let csrfSource: CsrfTokenSource | null = null;

export function setCsrfTokenSource(source: CsrfTokenSource): void {
  csrfSource = source;
}

const fallbackMessages: Record<number, string> = {
  400: 'Some of the values are not valid.',
  401: 'You are not signed in.',
  403: 'Your role does not allow this.',
  404: 'Not found.',
  409: 'This conflicts with the current state.',
  410: 'This link has expired or was already used.',
  429: 'Too many attempts.',
};

type Method = 'GET' | 'POST' | 'PATCH' | 'PUT' | 'DELETE';

interface RequestOptions {
  method?: Method;
  body?: unknown;
  signal?: AbortSignal;
}

export async function api<T>(path: string, options: RequestOptions = {}): Promise<T> {
  const method = options.method ?? 'GET';
  if (method === 'GET') return readAnswer<T>(await send(path, method, options));
  return withCsrfToken(async (token) => readAnswer<T>(await send(path, method, options, token)));
}

/**
 * Runs a state-changing request with the session's CSRF token. A token goes stale when the server
 * session ends or is renewed: when the server rejects it, the request runs once more with a fresh
 * one. The client's one CSRF retry — api() and the capture upload (XHR, for its progress) use it.
 */
export async function withCsrfToken<T>(request: (token: string | undefined) => Promise<T>): Promise<T> {
  const token = csrfSource ? await csrfSource.get() : undefined;
  try {
    return await request(token);
  } catch (error) {
    if (!csrfSource || !isCsrfRejection(error)) throw error;
    return request(await csrfSource.refresh());
  }
}

function isCsrfRejection(error: unknown): boolean {
  return error instanceof ApiError && error.status === 403 && /csrf/i.test(error.message);
}

async function send(path: string, method: Method, options: RequestOptions, token?: string): Promise<Response> {
  const headers: Record<string, string> = { accept: 'application/json' };
  if (options.body !== undefined) headers['content-type'] = 'application/json';
  if (token) headers['x-csrf-token'] = token;
  try {
    return await fetch(path, {
      method,
      headers,
      credentials: 'same-origin',
      body: options.body === undefined ? undefined : JSON.stringify(options.body),
      signal: options.signal,
    });
  } catch (cause) {
    if (cause instanceof DOMException && cause.name === 'AbortError') throw cause;
    throw new ApiError(0, 'Cannot reach the Flagline server. Check your connection and try again.');
  }
}

async function readAnswer<T>(response: Response): Promise<T> {
  const text = await response.text();
  let body: unknown = undefined;
  if (text) {
    try {
      body = JSON.parse(text);
    } catch {
      body = undefined;
    }
  }
  if (response.ok) return body as T;
  const parsed = apiErrorSchema.safeParse(body);
  if (parsed.success) throw new ApiError(response.status, parsed.data.error, parsed.data.fields ?? {});
  throw new ApiError(
    response.status,
    fallbackMessages[response.status] ?? `The server could not answer (HTTP ${response.status}). Try again in a moment.`,
  );
}

export function isApiError(error: unknown, status?: number): error is ApiError {
  return error instanceof ApiError && (status === undefined || error.status === status);
}
