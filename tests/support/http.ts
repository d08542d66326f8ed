// A signed-in HTTP client for the running app (started by `npm test`, address in RIMWATCH_TEST_URL).
// Signs in through next-auth's own credentials endpoint, exactly as the browser does.

export const baseUrl = () => {
  const url = process.env.RIMWATCH_TEST_URL;
  if (!url) throw new Error("RIMWATCH_TEST_URL is not set: run integration tests through `npm test`");
  return url;
};

export interface Client {
  /** Whether the client holds a session (false for anonymous and refused sign-ins). */
  ok: boolean;
  /** Why sign-in was refused, or null. */
  error: string | null;
  cookie: string;
  fetch(path: string, init?: RequestInit): Promise<Response>;
  get(path: string): Promise<Response>;
  send(method: string, path: string, json?: unknown): Promise<Response>;
}

function collectCookies(res: Response, jar: Map<string, string>) {
  for (const c of res.headers.getSetCookie()) {
    const [pair] = c.split(";");
    if (!pair) continue;
    const i = pair.indexOf("=");
    jar.set(pair.slice(0, i), pair.slice(i + 1));
  }
}

function clientFrom(jar: Map<string, string>, ok = false, error: string | null = "no session"): Client {
  const cookie = () => [...jar].map(([k, v]) => `${k}=${v}`).join("; ");
  const f = (path: string, init: RequestInit = {}) =>
    fetch(`${baseUrl()}${path}`, { redirect: "manual", ...init, headers: { cookie: cookie(), ...(init.headers ?? {}) } });
  return {
    ok,
    error,
    get cookie() { return cookie(); },
    fetch: f,
    get: (path) => f(path),
    send: (method, path, json) =>
      f(path, { method, headers: json === undefined ? {} : { "content-type": "application/json" }, body: json === undefined ? null : JSON.stringify(json) }),
  };
}

/** A client with no session at all. */
export const anonymous = (): Client => clientFrom(new Map());

export async function signIn(email: string, password: string, headers: Record<string, string> = {}): Promise<Client> {
  const jar = new Map<string, string>();
  const csrfRes = await fetch(`${baseUrl()}/api/auth/csrf`);
  collectCookies(csrfRes, jar);
  const { csrfToken } = (await csrfRes.json()) as { csrfToken: string };
  const res = await fetch(`${baseUrl()}/api/auth/callback/credentials`, {
    method: "POST",
    redirect: "manual",
    headers: { "content-type": "application/x-www-form-urlencoded", cookie: [...jar].map(([k, v]) => `${k}=${v}`).join("; "), ...headers },
    body: new URLSearchParams({ csrfToken, email, password, json: "true" }),
  });
  collectCookies(res, jar);
  // With json=true next-auth answers a refused sign-in with 401 and { url } instead of a redirect.
  let location = res.headers.get("location") ?? "";
  if (!location && res.headers.get("content-type")?.includes("json")) location = ((await res.json()) as { url?: string }).url ?? "";
  const error = new URL(location, baseUrl()).searchParams.get("error");
  const ok = [...jar.keys()].some((k) => k.endsWith("next-auth.session-token"));
  return clientFrom(jar, ok, ok ? null : (error ?? "no session"));
}
