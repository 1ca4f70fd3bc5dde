/** Fetch wrapper for client components: JSON in and out, and the API's error contract turned into an Error. */
export class ApiError extends Error {
  constructor(readonly status: number, message: string, readonly fields?: Record<string, string[]>) {
    super(message);
  }
}

export async function api<T>(path: string, init: { method?: string; body?: unknown; signal?: AbortSignal } = {}): Promise<T> {
  const response = await fetch(path, {
    method: init.method ?? 'GET',
    headers: init.body === undefined ? undefined : { 'content-type': 'application/json' },
    body: init.body === undefined ? undefined : JSON.stringify(init.body),
    signal: init.signal,
  });
  const text = await response.text();
  const data = text ? JSON.parse(text) : null;
  if (!response.ok) {
    const error = data?.error;
    throw new ApiError(response.status, error?.message ?? `Request failed (${response.status}).`, error?.fields);
  }
  return data as T;
}
