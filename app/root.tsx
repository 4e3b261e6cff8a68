import { useEffect } from "react";
import { I18nextProvider } from "react-i18next";
import {
  data,
  isRouteErrorResponse,
  Links,
  Meta,
  Outlet,
  Scripts,
  ScrollRestoration,
  useRouteLoaderData,
  type MiddlewareFunction,
} from "react-router";
import type { Route } from "./+types/root";
import "./app.css";
import { ErrorPage } from "./components/error-page";
import { getI18n, LANGUAGE_COOKIE, resolveLanguage, type Language } from "./lib/i18n";
import { getUser } from "./server/guards.server";
import { applySecurityHeaders, applyShareHeaders, isAllowedOrigin, isSharedPath } from "./server/security.server";
import { readCookie } from "./server/station.server";

// Every request passes here: mutations from another origin are refused before any action runs,
// and every response carries the security headers.
// Answers under /shared/ (read-only links) also carry no-store, no-referrer and noindex.
const securityMiddleware: MiddlewareFunction<Response> = async ({ request }, next) => {
  const apply = (headers: Headers) => {
    applySecurityHeaders(headers);
    if (isSharedPath(request)) applyShareHeaders(headers);
  };
  if (!isAllowedOrigin(request)) {
    const res = new Response("Cross-origin request refused", { status: 403, headers: { "Content-Type": "text/plain" } });
    apply(res.headers);
    return res;
  }
  const res = await next();
  try {
    apply(res.headers);
    return res;
  } catch {
    // Some responses (e.g. Response.redirect) have immutable headers: copy them.
    const copy = new Response(res.body, res);
    apply(copy.headers);
    return copy;
  }
};

export const middleware = [securityMiddleware];

export async function loader({ request }: Route.LoaderArgs) {
  const user = await getUser(request);
  const lang = resolveLanguage(readCookie(request, LANGUAGE_COOKIE), user?.language, request.headers.get("accept-language"));
  return data({ lang });
}

export const links: Route.LinksFunction = () => [
  { rel: "icon", href: "/favicon.ico", sizes: "32x32" },
  { rel: "icon", href: "/logo.svg", type: "image/svg+xml" },
];

export function Layout({ children }: { children: React.ReactNode }) {
  const root = useRouteLoaderData<typeof loader>("root");
  const lang: Language = root?.lang ?? "en";
  return (
    <html lang={lang}>
      <head>
        <meta charSet="utf-8" />
        <meta name="viewport" content="width=device-width, initial-scale=1" />
        <meta name="theme-color" content="#0a6781" />
        <Meta />
        <Links />
      </head>
      <body className="min-h-screen">
        <I18nextProvider i18n={getI18n(lang)}>{children}</I18nextProvider>
        <ScrollRestoration />
        <Scripts />
      </body>
    </html>
  );
}

export default function App() {
  // Marks the page as interactive (the end-to-end tests wait for it before tapping client-side controls).
  useEffect(() => {
    document.documentElement.dataset.hydrated = "true";
  }, []);
  return <Outlet />;
}

export function ErrorBoundary({ error }: Route.ErrorBoundaryProps) {
  const status = isRouteErrorResponse(error) ? error.status : 500;
  const stack = import.meta.env.DEV && error instanceof Error ? error.stack : undefined;
  return <ErrorPage status={status} stack={stack} />;
}
