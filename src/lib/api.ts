/**
 * The one way the client talks to the server. Features call these from their TanStack Query
 * hooks (src/features/<name>/api), never from components directly.
 * Errors arrive as { error: { code, message, details } } and become an ApiError whose
 * message is the server's sentence, ready to show.
 */

export class ApiError extends Error {
  constructor(
    public status: number,
    public code: string,
    message: string,
    public details?: unknown,
  ) {
    super(message);
    this.name = 'ApiError';
  }
}

/**
 * Listeners told when the server answers 401 UNAUTHENTICATED (no session, or it ended); the app
 * shell registers one. Other 401s (a wrong password in a signature or password change) are
 * answers to show, not a lost session.
 */
type UnauthorizedListener = (path: string, quietSince: number) => void;
const unauthorizedListeners = new Set<UnauthorizedListener>();
export function onUnauthorized(fn: UnauthorizedListener): () => void {
  unauthorizedListeners.add(fn);
  return () => unauthorizedListeners.delete(fn);
}
/** quietSince: the time of the server's last answer before this 401 (how long the session was idle). */
function notifyUnauthorized(path: string, quietSince: number) {
  for (const fn of unauthorizedListeners) fn(path, quietSince);
}

/** Time of the last answer from the server (the server's idle clock restarts with each request). */
let lastServerContact = Date.now();
export function lastApiActivity(): number {
  return lastServerContact;
}

export interface ApiFetchOptions {
  method?: 'GET' | 'POST' | 'PUT' | 'PATCH' | 'DELETE';
  body?: unknown;
  /** query string parameters; undefined, null and '' are left out */
  query?: Record<string, string | number | boolean | undefined | null>;
  signal?: AbortSignal;
}

export function withQuery(path: string, query?: ApiFetchOptions['query']): string {
  if (!query) return path;
  const qs = new URLSearchParams();
  for (const [k, v] of Object.entries(query)) if (v !== undefined && v !== null && v !== '') qs.set(k, String(v));
  const s = qs.toString();
  return s ? `${path}${path.includes('?') ? '&' : '?'}${s}` : path;
}

async function errorFrom(res: Response): Promise<ApiError> {
  let body: unknown;
  try {
    body = await res.json();
  } catch {
    body = undefined;
  }
  return errorFromBody(res.status, body);
}

function errorFromBody(status: number, body: unknown): ApiError {
  const e = (body as { error?: { code?: string; message?: string; details?: unknown } } | undefined)?.error;
  if (e?.message) return new ApiError(status, e.code ?? 'ERROR', e.message, e.details);
  if (status === 413)
    return new ApiError(status, 'TOO_LARGE', 'The file or request is larger than the server accepts.');
  if (status === 502 || status === 503 || status === 504)
    return new ApiError(status, 'UNAVAILABLE', 'The server is not reachable. Check the connection and try again.');
  return new ApiError(status, 'HTTP_' + status, `The server answered with status ${status}.`);
}

/** JSON request. Resolves to the parsed body (undefined for 204). */
export async function apiFetch<T = unknown>(path: string, opts: ApiFetchOptions = {}): Promise<T> {
  const { method = 'GET', body, query, signal } = opts;
  const url = withQuery(path, query);
  let res: Response;
  try {
    res = await fetch(url, {
      method,
      credentials: 'same-origin',
      headers:
        body !== undefined
          ? { 'Content-Type': 'application/json', Accept: 'application/json' }
          : { Accept: 'application/json' },
      body: body !== undefined ? JSON.stringify(body) : undefined,
      signal,
    });
  } catch (e) {
    if ((e as Error)?.name === 'AbortError') throw e;
    throw new ApiError(0, 'NETWORK', 'The server could not be reached. Check the network connection and try again.');
  }
  const quietSince = lastServerContact;
  lastServerContact = Date.now();
  if (!res.ok) {
    const err = await errorFrom(res);
    if (err.status === 401 && err.code === 'UNAUTHENTICATED') notifyUnauthorized(path, quietSince);
    throw err;
  }
  if (res.status === 204) return undefined as T;
  const text = await res.text();
  return (text ? JSON.parse(text) : undefined) as T;
}

export interface UploadProgress {
  loaded: number;
  total: number;
  /** 0..1 */
  fraction: number;
}

/** Multipart upload with progress (fetch cannot report upload progress; XMLHttpRequest can). */
export function apiUpload<T = unknown>(
  path: string,
  formData: FormData,
  onProgress?: (p: UploadProgress) => void,
  opts: { method?: 'POST' | 'PUT'; signal?: AbortSignal } = {},
): Promise<T> {
  return new Promise<T>((resolve, reject) => {
    const xhr = new XMLHttpRequest();
    xhr.open(opts.method ?? 'POST', path);
    xhr.withCredentials = false; // same-origin requests send the cookie anyway
    xhr.setRequestHeader('Accept', 'application/json');
    xhr.responseType = 'text';
    if (onProgress)
      xhr.upload.onprogress = (ev) => {
        const total = ev.lengthComputable ? ev.total : 0;
        onProgress({ loaded: ev.loaded, total, fraction: total ? ev.loaded / total : 0 });
      };
    xhr.onload = () => {
      const quietSince = lastServerContact;
      lastServerContact = Date.now();
      let body: unknown;
      try {
        body = xhr.responseText ? JSON.parse(xhr.responseText) : undefined;
      } catch {
        body = undefined;
      }
      if (xhr.status >= 200 && xhr.status < 300) {
        onProgress?.({ loaded: 1, total: 1, fraction: 1 });
        resolve(body as T);
      } else {
        const err = errorFromBody(xhr.status, body);
        if (err.status === 401 && err.code === 'UNAUTHENTICATED') notifyUnauthorized(path, quietSince);
        reject(err);
      }
    };
    xhr.onerror = () =>
      reject(new ApiError(0, 'NETWORK', 'The upload was interrupted. Check the network connection and try again.'));
    xhr.onabort = () => reject(new ApiError(0, 'ABORTED', 'The upload was cancelled.'));
    if (opts.signal) opts.signal.addEventListener('abort', () => xhr.abort(), { once: true });
    xhr.send(formData);
  });
}

/** URL for a file download (a plain link or window.open; the session cookie goes along). */
export function downloadUrl(path: string, query?: ApiFetchOptions['query']): string {
  return withQuery(path, query);
}

/** Words for any thrown value, for ErrorNote and toasts. */
export function errorMessage(e: unknown): string {
  if (e instanceof ApiError) return e.message;
  if (e instanceof Error && e.message) return e.message;
  return 'Something went wrong. Try again; if it persists, tell the system administrator.';
}
