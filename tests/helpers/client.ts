import { randomBytes } from "node:crypto";

export const APP_URL = process.env.APP_URL ?? "http://127.0.0.1:3101";
export const MAILDEV_URL = process.env.MAILDEV_URL ?? "http://127.0.0.1:1180";

/**
 * A browser-like HTTP client against the running app: keeps cookies, sends the app's Origin on
 * mutations, and comes from its own address (X-Forwarded-For; the test server trusts the proxy
 * header) so rate limits in one test do not spill into another.
 */
export class Client {
  cookies = new Map<string, string>();
  address = `10.${randomBytes(1)[0]}.${randomBytes(1)[0]}.${randomBytes(1)[0]}`;
  origin: string | null = APP_URL;

  cookieHeader() {
    return [...this.cookies].map(([k, v]) => `${k}=${v}`).join("; ");
  }

  store(res: Response) {
    for (const c of res.headers.getSetCookie()) {
      const [pair, ...attrs] = c.split(";");
      const i = pair.indexOf("=");
      const name = pair.slice(0, i).trim();
      const value = pair.slice(i + 1).trim();
      const expired = attrs.some((a) => /max-age=0\b/i.test(a.trim()) || /expires=thu, 01 jan 1970/i.test(a.trim()));
      if (expired || value === "") this.cookies.delete(name);
      else this.cookies.set(name, value);
    }
  }

  /**
   * `form` and `json` set their own Content-Type; `body` (FormData, bytes or a stream) is sent as it
   * is, with the Content-Type given in `headers` (fetch makes the multipart one for FormData).
   */
  async request(
    path: string,
    init: { method?: string; form?: Record<string, string>; headers?: Record<string, string>; json?: unknown; body?: BodyInit } = {},
  ) {
    const headers: Record<string, string> = { "x-forwarded-for": this.address, ...init.headers };
    if (this.cookies.size) headers.cookie = this.cookieHeader();
    const method = init.method ?? (init.form || init.json || init.body ? "POST" : "GET");
    if (method !== "GET" && this.origin && !("origin" in headers)) headers.origin = this.origin;
    let body: BodyInit | undefined;
    if (init.form) {
      headers["content-type"] = "application/x-www-form-urlencoded";
      body = new URLSearchParams(init.form).toString();
    } else if (init.json !== undefined) {
      headers["content-type"] = "application/json";
      body = JSON.stringify(init.json);
    } else {
      body = init.body;
    }
    // A streamed request body needs half-duplex in Node's fetch.
    const duplex = body instanceof ReadableStream ? { duplex: "half" } : {};
    let res: Response;
    try {
      // A request with no answer in 30 s fails naming itself, instead of the test timing out silently.
      res = await fetch(new URL(path, APP_URL), { method, headers, body, redirect: "manual", signal: AbortSignal.timeout(30_000), ...duplex } as RequestInit);
    } catch (e) {
      // "fetch failed" alone does not say what failed: the request and the socket's own error do.
      const cause = (e as { cause?: { code?: string; message?: string } }).cause;
      const why = [e instanceof Error ? `${e.name}: ${e.message}` : String(e), cause ? `(${[cause.code, cause.message].filter(Boolean).join(": ")})` : ""].filter(Boolean).join(" ");
      throw new Error(`${method} ${path.slice(0, 200)}: ${why}`, { cause: e });
    }
    this.store(res);
    return res;
  }

  get(path: string) {
    return this.request(path);
  }

  post(path: string, form: Record<string, string>, headers?: Record<string, string>) {
    return this.request(path, { form, headers });
  }

  /** Signs in through Auth.js exactly as the sign-in form does; returns the final redirect. */
  async signIn(email: string, password: string) {
    const page = await this.get("/signin");
    const html = await page.text();
    const csrfToken = /name="csrfToken" value="([^"]+)"/.exec(html)?.[1];
    if (!csrfToken) throw new Error("no CSRF token on /signin");
    const res = await this.post("/auth/callback/credentials", { email, password, csrfToken, callbackUrl: "/" });
    return { status: res.status, location: res.headers.get("location") ?? "" };
  }

  async signedInUser() {
    const res = await this.get("/auth/session");
    const session = (await res.json()) as { user?: { id: string; email: string } } | null;
    return session?.user ?? null;
  }
}

export async function signedIn(email: string, password: string) {
  const c = new Client();
  const r = await c.signIn(email, password);
  if (!r.location.endsWith("/")) throw new Error(`sign-in of ${email} failed: ${r.location}`);
  return c;
}

export const location = (res: Response) => {
  const l = res.headers.get("location");
  return l ? new URL(l, APP_URL).pathname + new URL(l, APP_URL).search : null;
};
