import { useTranslation } from "react-i18next";
import { Form, NavLink, Outlet } from "react-router";
import { LanguageSwitch } from "~/components/language-switch";
import { Wordmark } from "~/components/logo";
import { navigationFor } from "~/lib/navigation";
import { requireUser } from "~/server/guards.server";
import type { Route } from "./+types/shell";

export async function loader({ request, params }: Route.LoaderArgs) {
  const user = await requireUser(request);
  const current = user.memberships.find((m) => m.siteId === params.siteId) ?? (params.siteId ? null : user.memberships[0]) ?? null;
  return {
    user: { name: user.name, email: user.email },
    sites: user.memberships,
    current,
    nav: navigationFor(current?.role ?? null, current?.siteId ?? null),
  };
}

export default function Shell({ loaderData }: Route.ComponentProps) {
  const { t } = useTranslation();
  const { user, sites, current, nav } = loaderData;
  return (
    <div className="flex min-h-screen flex-col">
      <a href="#main" className="sr-only focus:not-sr-only focus:absolute focus:top-2 focus:left-2 focus:rounded-lg focus:bg-white focus:p-3">
        {t("app.skip")}
      </a>
      <header className="border-b border-line bg-white">
        <div className="flex flex-wrap items-center gap-3 px-4 py-3 sm:px-6">
          <a href="/" aria-label="Chillwright — home">
            <Wordmark />
          </a>
          {current ? (
            <div className="flex items-center gap-2 rounded-xl bg-frost px-3 py-2">
              <span className="text-sm font-bold text-ink-soft">{t("nav.site")}:</span>
              <span className="font-bold" data-testid="current-site">
                {current.siteName}
              </span>
              <span className="rounded-lg bg-glacier-light px-2 py-0.5 text-sm font-bold text-glacier-dark" data-testid="current-role">
                {t(`roles.${current.role}`)}
              </span>
            </div>
          ) : null}
          <div className="ml-auto flex items-center gap-2">
            <span className="hidden text-sm text-ink-soft md:inline">{user.name}</span>
            <LanguageSwitch />
            <Form method="post" action="/signout" reloadDocument>
              <button type="submit" className="btn-quiet min-h-12 px-4 text-sm">
                {t("nav.signOut")}
              </button>
            </Form>
          </div>
        </div>
        <nav aria-label={t("nav.mainMenu")} className="px-2 sm:px-4">
          {/* Wraps to a second row on an upright tablet: every item stays in sight, none scrolls away. */}
          <ul className="flex flex-wrap gap-x-1">
            {nav.map((item) => (
              <li key={item.key}>
                <NavLink
                  to={item.to}
                  end={item.key === "home" || item.key === "sites"}
                  className={({ isActive }) =>
                    `flex min-h-14 items-center border-b-4 px-3 text-base font-bold whitespace-nowrap lg:px-4 ${isActive ? "border-glacier text-glacier-dark" : "border-transparent text-ink-soft hover:text-ink"}`
                  }
                >
                  {t(`nav.${item.key}`)}
                </NavLink>
              </li>
            ))}
          </ul>
        </nav>
      </header>
      {sites.length > 1 ? (
        <nav aria-label={t("sites.yours")} className="flex flex-wrap gap-2 px-4 pt-3 sm:px-6">
          {sites.map((s) => (
            <NavLink
              key={s.siteId}
              to={`/sites/${s.siteId}`}
              className={({ isActive }) => `rounded-full border-2 px-4 py-2 text-sm font-bold ${isActive || s.siteId === current?.siteId ? "border-glacier bg-glacier-light" : "border-line bg-white"}`}
            >
              {s.siteName}
            </NavLink>
          ))}
        </nav>
      ) : null}
      <main id="main" className="mx-auto w-full max-w-6xl flex-1 px-4 py-6 sm:px-6">
        <Outlet />
      </main>
      <footer className="border-t border-line px-6 py-4 text-sm text-ink-soft">{t("app.caution")}</footer>
    </div>
  );
}
