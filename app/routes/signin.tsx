import { useTranslation } from "react-i18next";
import { data, redirect } from "react-router";
import { Field, Notice, PublicFrame } from "~/components/frame";
import { getCsrf } from "~/server/auth.server";
import { getUser, homePath } from "~/server/guards.server";
import type { Route } from "./+types/signin";

export const meta: Route.MetaFunction = () => [{ title: "Sign in · Chillwright" }];

const localPath = (s: string | null) => (s && /^\/(?![\/\\])[^\x00-\x1f]*$/.test(s) ? s : "/");

export async function loader({ request }: Route.LoaderArgs) {
  const user = await getUser(request);
  if (user) throw redirect(homePath(user));
  const url = new URL(request.url);
  const { csrfToken, setCookie } = await getCsrf(request);
  const headers = new Headers();
  for (const c of setCookie) headers.append("Set-Cookie", c);
  return data(
    {
      csrfToken,
      next: localPath(url.searchParams.get("next")),
      error: url.searchParams.get("error") ? (url.searchParams.get("code") ?? "error") : null,
      signedOut: url.searchParams.has("signedOut"),
      passwordSet: url.searchParams.has("passwordSet"),
    },
    { headers },
  );
}

export default function SignIn({ loaderData }: Route.ComponentProps) {
  const { t } = useTranslation();
  const { csrfToken, next, error, signedOut, passwordSet } = loaderData;
  const message =
    error === "credentials" ? t("signin.failed") : error === "rate_limited" ? t("signin.rateLimited") : error ? t("signin.error") : null;
  return (
    <PublicFrame title={t("signin.title")}>
      {message ? <Notice tone="error">{message}</Notice> : null}
      {signedOut ? <Notice tone="ok">{t("signin.signedOut")}</Notice> : null}
      {passwordSet ? <Notice tone="ok">{t("signin.passwordSet")}</Notice> : null}
      {/* Posts straight to Auth.js, which checks the CSRF token and sets the session cookie. */}
      <form method="post" action="/auth/callback/credentials">
        <input type="hidden" name="csrfToken" value={csrfToken} />
        <input type="hidden" name="callbackUrl" value={next} />
        <Field label={t("signin.email")} name="email" type="email" autoComplete="username" required autoFocus />
        <Field label={t("signin.password")} name="password" type="password" autoComplete="current-password" required />
        <button type="submit" className="btn-primary w-full">
          {t("signin.submit")}
        </button>
      </form>
      <p className="mt-6 text-center">
        <a href="/forgot-password" className="font-bold text-glacier underline underline-offset-4">
          {t("signin.forgot")}
        </a>
      </p>
    </PublicFrame>
  );
}
