/** Fetch wrapper for client components: JSON in and out, and the API's error contract turned into an Error. */
export class ApiError extends Error {
  constructor(
    readonly status: number,
    message: string,
    readonly fields?: Record<string, string[]>,
  ) {
    super(message);
  }
}

export interface ApiInit {
  method?: string;
  /** Sent as JSON, except FormData (uploads), which goes as multipart. */
  body?: unknown;
  signal?: AbortSignal;
  /** Statuses whose body is the answer rather than an error (the health check's 503 still says what is down). */
  answers?: number[];
}

/**
 * The one way components call the API. Non-2xx answers (other than `answers`) throw ApiError with the server's
 * message and field errors; a body that is not JSON (a proxy's error page) gives the status alone. A network
 * failure stays the fetch TypeError, so forms can tell "the server said no" from "the server could not be reached".
 */
export async function api<T>(path: string, init: ApiInit = {}): Promise<T> {
  const form = typeof FormData !== 'undefined' && init.body instanceof FormData;
  const response = await fetch(path, {
    method: init.method ?? 'GET',
    headers: init.body === undefined || form ? undefined : { 'content-type': 'application/json' },
    body: init.body === undefined ? undefined : form ? (init.body as FormData) : JSON.stringify(init.body),
    signal: init.signal,
    cache: 'no-store',
  });
  const text = await response.text();
  let data: unknown = null;
  try {
    data = text ? JSON.parse(text) : null;
  } catch {
    data = null;
  }
  if (!response.ok && !init.answers?.includes(response.status)) {
    const error = (data as { error?: { message?: string; fields?: Record<string, string[]> } } | null)?.error;
    throw new ApiError(response.status, error?.message ?? `Request failed (${response.status}).`, error?.fields);
  }
  return data as T;
}
