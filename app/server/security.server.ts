import { env } from "./env.server";

const appOrigin = new URL(env.APP_URL).origin;
const safeMethods = new Set(["GET", "HEAD", "OPTIONS"]);

/**
 * Cross-site request forgery guard for every mutation: the browser's Origin header must be this
 * app's. API clients that authenticate with a bearer token (no ambient cookie) may omit it.
 */
export function isAllowedOrigin(request: Request) {
  if (safeMethods.has(request.method)) return true;
  const origin = request.headers.get("origin");
  if (origin) return origin === appOrigin || origin === new URL(request.url).origin;
  const url = new URL(request.url);
  return url.pathname.startsWith("/api/") && /^Bearer /i.test(request.headers.get("authorization") ?? "");
}

export function contentSecurityPolicy(nonce: string) {
  const dev = env.NODE_ENV === "development";
  return [
    "default-src 'self'",
    `script-src 'self' 'nonce-${nonce}'${dev ? " 'unsafe-inline'" : ""}`,
    "style-src 'self' 'unsafe-inline'",
    "img-src 'self' data: blob:",
    "font-src 'self'",
    `connect-src 'self'${dev ? " ws:" : ""}`,
    "media-src 'self' blob:",
    "object-src 'none'",
    "base-uri 'self'",
    "form-action 'self'",
    "frame-ancestors 'none'",
  ].join("; ");
}

export function applySecurityHeaders(headers: Headers) {
  if (!headers.has("Content-Security-Policy")) {
    headers.set("Content-Security-Policy", "default-src 'none'; frame-ancestors 'none'; sandbox");
  }
  headers.set("X-Content-Type-Options", "nosniff");
  headers.set("X-Frame-Options", "DENY");
  headers.set("Referrer-Policy", "same-origin");
  headers.set("Cross-Origin-Opener-Policy", "same-origin");
  headers.set("Permissions-Policy", "camera=(self), microphone=(), geolocation=()");
  if (env.APP_URL.startsWith("https:")) headers.set("Strict-Transport-Security", "max-age=31536000");
}

/** Shared (read-only link) pages: the token is in the address, so nothing may keep, pass on or index it. */
export const isSharedPath = (request: Request) => new URL(request.url).pathname.startsWith("/shared/");
export function applyShareHeaders(headers: Headers) {
  headers.set("Cache-Control", "no-store");
  headers.set("Referrer-Policy", "no-referrer");
  headers.set("X-Robots-Tag", "noindex, nofollow");
}
