import { apiErrorSchema } from '../../shared/schemas';
import { ApiError } from './api';

export interface UploadProgress {
  loaded: number;
  total: number;
}

export interface XhrUploadOptions {
  url: string;
  body: Document | XMLHttpRequestBodyInit;
  /** bytes to send, for progress when the browser cannot tell */
  size: number;
  headers?: Record<string, string>;
  csrfToken?: string;
  onProgress: (p: UploadProgress) => void;
  signal?: AbortSignal;
  /** what to say for a status whose answer carries no message of the server's */
  messages: Record<number, string>;
  fallback: (status: number) => string;
}

/**
 * POST with upload progress: XMLHttpRequest rather than fetch, because only XHR reports it. The
 * CSRF header is the one the api client sends; errors come back as ApiError like api()'s.
 */
export function xhrUpload<T>(o: XhrUploadOptions): Promise<T> {
  return new Promise((resolve, reject) => {
    const xhr = new XMLHttpRequest();
    xhr.open('POST', o.url);
    if (o.csrfToken) xhr.setRequestHeader('x-csrf-token', o.csrfToken);
    for (const [name, value] of Object.entries(o.headers ?? {})) xhr.setRequestHeader(name, value);
    xhr.setRequestHeader('accept', 'application/json');
    xhr.withCredentials = true;
    xhr.upload.onprogress = (e) => o.onProgress({ loaded: e.loaded, total: e.lengthComputable ? e.total : o.size });
    xhr.onerror = () => reject(new ApiError(0, 'The upload was interrupted. Check your connection and try again.'));
    xhr.onabort = () => reject(new DOMException('Upload cancelled', 'AbortError'));
    xhr.onload = () => {
      let body: unknown;
      try {
        body = xhr.responseText ? JSON.parse(xhr.responseText) : undefined;
      } catch {
        body = undefined;
      }
      if (xhr.status >= 200 && xhr.status < 300) return resolve(body as T);
      const parsed = apiErrorSchema.safeParse(body);
      if (parsed.success) return reject(new ApiError(xhr.status, parsed.data.error, parsed.data.fields ?? {}));
      reject(new ApiError(xhr.status, o.messages[xhr.status] ?? o.fallback(xhr.status)));
    };
    o.signal?.addEventListener('abort', () => xhr.abort());
    xhr.send(o.body);
  });
}
