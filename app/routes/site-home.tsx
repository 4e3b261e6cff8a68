import { useTranslation } from "react-i18next";
import { RuleSetCard } from "~/components/rule-set-card";
import { getRuleSet } from "~/lib/rule-sets";
import { can, requireRole } from "~/server/guards.server";
import type { Route } from "./+types/site-home";

export const meta: Route.MetaFunction = () => [{ title: "Today · Chillwright" }];

export async function loader({ request, params }: Route.LoaderArgs) {
  const { user, site, role } = await requireRole(request, can.viewSite, params.siteId);
  const ruleSet = getRuleSet(site.ruleSetCode);
  if (!ruleSet) throw new Error(`Unknown rule set ${site.ruleSetCode}`);
  return {
    name: user.name,
    role,
    ruleSet,
    site: {
      name: site.name,
      unit: site.temperatureUnit,
      timeZone: site.timeZone,
      interval: site.readingIntervalMinutes,
      retentionDays: site.retentionDays,
    },
  };
}

export default function SiteHome({ loaderData }: Route.ComponentProps) {
  const { t } = useTranslation();
  const { name, role, ruleSet, site } = loaderData;
  return (
    <div className="grid gap-6">
      <div>
        <h1 className="text-2xl font-extrabold tracking-tight">{t("home.welcome", { name: name.split(" ")[0] })}</h1>
        <p className="mt-1 text-lg text-ink-soft">
          {t("home.yourRole", { role: t(`roles.${role}`) })} — {t(`roleDuties.${role}`)}
        </p>
      </div>
      <RuleSetCard ruleSet={ruleSet} unit={site.unit} />
      <section className="card" aria-labelledby="site-facts">
        <h2 id="site-facts" className="text-sm font-bold tracking-wide text-ink-soft uppercase">
          {t("home.siteFacts")}
        </h2>
        <dl className="mt-3 grid gap-4 sm:grid-cols-4">
          {[
            [t("home.unit"), `°${site.unit}`],
            [t("home.timeZone"), site.timeZone],
            [t("home.interval"), t("home.minutes", { count: site.interval })],
            [t("home.retention"), t("home.days", { count: site.retentionDays })],
          ].map(([k, v]) => (
            <div key={k}>
              <dt className="text-sm text-ink-soft">{k}</dt>
              <dd className="text-lg font-bold">{v}</dd>
            </div>
          ))}
        </dl>
      </section>
    </div>
  );
}
