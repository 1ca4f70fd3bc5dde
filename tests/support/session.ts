/**
 * A signed-in HTTP client: signs in through next-auth's own endpoints (GET /api/auth/csrf, then
 * POST /api/auth/callback/credentials) and carries the cookies on every later request.
 */
export class Session {
  private cookies = new Map<string, string>();

  constructor(readonly baseUrl: string) {}

  private absorb(response: Response): void {
    for (const header of response.headers.getSetCookie()) {
      const [pair] = header.split(';');
      const index = pair.indexOf('=');
      const name = pair.slice(0, index).trim();
      const value = pair.slice(index + 1);
      if (value === '' || /max-age=0/i.test(header)) this.cookies.delete(name);
      else this.cookies.set(name, value);
    }
  }

  /** Continues another client's session (e.g. after a server restart). */
  adoptCookies(other: Session): this {
    this.cookies = new Map(other.cookies);
    return this;
  }

  cookieHeader(): string {
    return [...this.cookies].map(([k, v]) => `${k}=${v}`).join('; ');
  }

  async fetch(pathname: string, init: RequestInit = {}): Promise<Response> {
    const headers = new Headers(init.headers);
    if (this.cookies.size) headers.set('cookie', this.cookieHeader());
    const response = await fetchOnce(this.baseUrl + pathname, { ...init, headers, redirect: 'manual' });
    this.absorb(response);
    return response;
  }

  json(pathname: string, method: string, body?: unknown): Promise<Response> {
    return this.fetch(pathname, {
      method,
      headers: { 'content-type': 'application/json' },
      body: body === undefined ? undefined : JSON.stringify(body),
    });
  }

  /** Returns the callback's answer; success is a redirect whose location has no `error=`. */
  async signIn(email: string, password: string, headers: Record<string, string> = {}): Promise<{ ok: boolean; error: string | null }> {
    const csrf = await (await this.fetch('/api/auth/csrf', { headers })).json();
    const response = await this.fetch('/api/auth/callback/credentials', {
      method: 'POST',
      headers: { ...headers, 'content-type': 'application/x-www-form-urlencoded' },
      body: new URLSearchParams({ csrfToken: csrf.csrfToken, email, password, json: 'true' }),
    });
    // With json=true next-auth answers { url } instead of redirecting; the outcome is in that URL's `error`.
    const target = response.headers.get('location') ?? ((await response.json().catch(() => ({}))) as { url?: string }).url ?? '';
    const error = new URL(target, this.baseUrl).searchParams.get('error');
    return { ok: !error && this.cookies.has('next-auth.session-token'), error };
  }
}

export async function signedIn(baseUrl: string, email: string, password: string): Promise<Session> {
  const session = new Session(baseUrl);
  const result = await session.signIn(email, password);
  if (!result.ok) throw new Error(`sign-in as ${email} failed: ${result.error}`);
  return session;
}

/**
 * fetch, sent again once when the server closed an idle keep-alive connection just as it was reused (undici's
 * "other side closed"): the request never reached the handler, so sending it again is safe. Happens after a pause
 * longer than the server's keep-alive timeout, e.g. while a test runs a script against the database.
 */
async function fetchOnce(url: string, init: RequestInit): Promise<Response> {
  try {
    return await fetch(url, init);
  } catch (error) {
    const cause = (error as { cause?: { code?: string } }).cause;
    if (cause?.code !== 'UND_ERR_SOCKET') throw error;
    return fetch(url, init);
  }
}
