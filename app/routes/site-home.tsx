import { useTranslation } from "react-i18next";
import { Link } from "react-router";
import { verdictStyle } from "~/components/batch-card";
import { RecordsDownloads } from "~/components/records-downloads";
import { Figure } from "~/components/frame";
import { RuleSetCard } from "~/components/rule-set-card";
import { slowerPercent } from "~/lib/equipment-learning";
import { lastWeek } from "~/lib/records-export";
import { getRuleSet } from "~/lib/rule-sets";
import { can, requireRole } from "~/server/guards.server";
import { getGlance } from "~/server/site-overview.server";
import type { Route } from "./+types/site-home";

export const meta: Route.MetaFunction = () => [{ title: "Today · Chillwright" }];

export async function loader({ request, params }: Route.LoaderArgs) {
  const { user, site, role } = await requireRole(request, can.viewSite, params.siteId);
  const ruleSet = getRuleSet(site.ruleSetCode);
  if (!ruleSet) throw new Error(`Unknown rule set ${site.ruleSetCode}`);
  // Cooks keep their own home; the people who review get the day's picture on top.
  const glance = can.review.includes(role) ? await getGlance(site) : null;
  return {
    glance,
    exportWeek: can.exportRecords.includes(role) ? lastWeek(site.timeZone) : null,
    siteId: site.id,
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
  const { name, role, ruleSet, site, glance, siteId, exportWeek } = loaderData;
  return (
    <div className="grid gap-6">
      <div>
        <h1 className="text-2xl font-extrabold tracking-tight">{t("home.welcome", { name: name.split(" ")[0] })}</h1>
        <p className="mt-1 text-lg text-ink-soft">
          {t("home.yourRole", { role: t(`roles.${role}`) })} — {t(`roleDuties.${role}`)}
        </p>
      </div>
      {glance ? <Glance glance={glance} siteId={siteId} /> : null}
      {exportWeek ? <RecordsExport siteId={siteId} week={exportWeek} timeZone={site.timeZone} /> : null}
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

type GlanceData = NonNullable<Route.ComponentProps["loaderData"]["glance"]>;

function Glance({ glance, siteId }: { glance: GlanceData; siteId: string }) {
  const { t } = useTranslation();
  const { active, week, atRisk, overdue, slower } = glance;
  const rate = week.ended ? `${Math.round((week.passed / week.ended) * 100)} %` : "—";
  return (
    <section className="card grid gap-5" aria-labelledby="glance">
      <div className="flex flex-wrap items-center justify-between gap-3">
        <h2 id="glance" className="text-xl font-extrabold">
          {t("glance.title")}
        </h2>
        <Link to={`/sites/${siteId}/review`} className="btn-quiet">
          {t("glance.openQueue")}
        </Link>
      </div>
      <dl className="grid gap-3 sm:grid-cols-3">
        <Figure testId="glance-pass" label={t("glance.passRate")} value={rate} detail={week.ended ? t("glance.passCounts", { passed: week.passed, ended: week.ended }) : t("glance.noneEnded")} />
        <Figure testId="glance-at-risk" label={t("glance.atRisk")} value={String(atRisk)} detail={t("glance.atRiskHint")} />
        <Figure testId="glance-overdue" label={t("glance.overdue")} value={String(overdue)} detail={t("glance.overdueHint")} />
      </dl>
      <div>
        <h3 className="text-sm font-bold tracking-wide text-ink-soft uppercase">{t("glance.active")}</h3>
        {active.length === 0 ? (
          <p className="mt-2 text-base">{t("glance.noActive")}</p>
        ) : (
          <>
            <ul className="mt-2 grid gap-2 sm:grid-cols-2" data-testid="glance-active">
              {active.map((b) => (
                <li key={b.id}>
                  <Link to={`/sites/${siteId}/batches/${b.id}`} className="flex min-h-14 items-center justify-between gap-3 rounded-xl border-2 border-line px-4 py-2 hover:border-glacier">
                    <span>
                      <span className="block font-extrabold">{b.product}</span>
                      <span className="text-sm text-ink-soft">{t("glance.lot", { lot: b.lotCode })}</span>
                    </span>
                    {b.verdict ? (
                      <span className={`rounded-xl border-2 px-2 py-0.5 text-sm font-extrabold whitespace-nowrap ${verdictStyle[b.verdict]}`}>{t(`verdict.${b.verdict}`)}</span>
                    ) : null}
                  </Link>
                </li>
              ))}
            </ul>
            <p className="mt-2 text-sm text-ink-soft">{t("app.caution")}</p>
          </>
        )}
      </div>
      <div data-testid="glance-equipment">
        <h3 className="text-sm font-bold tracking-wide text-ink-soft uppercase">{t("glance.equipment")}</h3>
        {slower.length === 0 ? (
          <p className="mt-2 text-base">{t("glance.equipmentNone")}</p>
        ) : (
          <ul className="mt-2 grid gap-2">
            {slower.map((e) => (
              <li key={e.id}>
                <Link to={`/sites/${siteId}/equipment/${e.id}`} className="font-bold text-glacier-dark underline underline-offset-4">
                  {t("glance.slowerBy", { name: e.name, percent: e.trend.status === "too-few" ? 0 : slowerPercent(e.trend) })}
                </Link>
              </li>
            ))}
          </ul>
        )}
        <p className="mt-2 text-sm text-ink-soft">{t("glance.equipmentRule")}</p>
      </div>
    </section>
  );
}

function RecordsExport({ siteId, week, timeZone }: { siteId: string; week: { from: string; to: string }; timeZone: string }) {
  const { t } = useTranslation();
  return (
    <section className="card grid gap-4" aria-labelledby="records-export">
      <div className="flex flex-wrap items-start justify-between gap-3">
        <div>
          <h2 id="records-export" className="text-xl font-extrabold">
            {t("recordsExport.title")}
          </h2>
          <p className="mt-1 text-base text-ink-soft">{t("recordsExport.intro", { zone: timeZone })}</p>
        </div>
        <Link to={`/sites/${siteId}/sharing`} className="btn-quiet">
          {t("share.fromExportCard")}
        </Link>
      </div>
      <RecordsDownloads base={`/sites/${siteId}`} range={week} rangeTitle={t("recordsExport.lastWeek", { from: week.from, to: week.to })} otherTitle={t("recordsExport.otherPeriod")} />
    </section>
  );
}
