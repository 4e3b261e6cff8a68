import { useTranslation } from "react-i18next";
import { Link } from "react-router";
import { z } from "zod";
import { faces, getCoolingMethod } from "~/lib/engine/equipment";
import { learnedFactor } from "~/lib/equipment-learning";
import { can, isUuid, notFound, requireRole } from "~/server/guards.server";
import { getEquipmentTrends, getLearnedFrom, getUnit } from "~/server/site-overview.server";
import type { Route } from "./+types/site-equipment";

export const meta: Route.MetaFunction = () => [{ title: "Equipment · Chillwright" }];

const PAGE_SIZE = 20;
const PageSchema = z.coerce.number().int().min(1).max(10_000).catch(1);

export async function loader({ request, params }: Route.LoaderArgs) {
  const { site } = await requireRole(request, can.review, params.siteId);
  if (!isUuid(params.equipmentId)) notFound();
  const unit = await getUnit(site.id, params.equipmentId);
  if (!unit) notFound();
  const page = PageSchema.parse(new URL(request.url).searchParams.get("page") ?? undefined);
  const [[trend], learnedFrom] = await Promise.all([getEquipmentTrends(site.id, unit.id), getLearnedFrom(site.id, unit.id, page, PAGE_SIZE)]);

  // The engine scales every face of the method by the unit's surface factor s: h_eff = h_default · s.
  const method = getCoolingMethod(unit.method);
  const learned = learnedFactor(unit);
  const sd = unit.learnedSd ?? 0;
  const coefficients = method
    ? faces.map((face) => {
        const h = method.faces[face].convection.h;
        return learned
          ? { face, defaultH: h, effectiveH: h * learned.factor, low: h * Math.exp(unit.learnedLnS! - sd), high: h * Math.exp(unit.learnedLnS! + sd) }
          : { face, defaultH: h, effectiveH: null, low: null, high: null };
      })
    : [];
  return {
    siteId: site.id,
    timeZone: site.timeZone,
    unit: { id: unit.id, name: unit.name, method: unit.method, active: unit.active },
    learned,
    coefficients,
    trend: trend?.trend ?? { status: "too-few" as const },
    learnedFrom,
    page: learnedFrom.page,
    pageSize: PAGE_SIZE,
  };
}

export default function SiteEquipment({ loaderData }: Route.ComponentProps) {
  const { t, i18n } = useTranslation();
  const { siteId, timeZone, unit, learned, coefficients, trend, learnedFrom, page, pageSize } = loaderData;
  const num = (v: number, digits: number) => new Intl.NumberFormat(i18n.language, { minimumFractionDigits: digits, maximumFractionDigits: digits }).format(v);
  const date = (ms: number) => new Intl.DateTimeFormat(i18n.language, { timeZone, dateStyle: "medium", timeStyle: "short" }).format(ms);
  const first = (page - 1) * pageSize;
  const wm2k = t("equipmentPage.unitWm2K");
  return (
    <div className="grid gap-6">
      <div>
        <h1 className="text-2xl font-extrabold tracking-tight">{unit.name}</h1>
        <p className="mt-1 text-lg text-ink-soft">
          {t("equipmentPage.method")}: {t(`library.methods.${unit.method}`, { defaultValue: unit.method })}
          {unit.active ? null : ` · ${t("equipmentPage.retired")}`}
        </p>
      </div>

      <section className="card grid gap-4" aria-labelledby="coefficients">
        <div>
          <h2 id="coefficients" className="text-xl font-extrabold">
            {t("equipmentPage.coefficients")}
          </h2>
          <p className="text-base text-ink-soft">{t("equipmentPage.coefficientsIntro")}</p>
        </div>
        <p className="text-base" data-testid="learned-factor">
          <span className="font-bold">{t("equipmentPage.factor")}:</span>{" "}
          {learned ? (
            <span className="font-extrabold tabular-nums">
              {t("equipmentPage.factorValue", { factor: num(learned.factor, 2), spread: num(learned.spread ?? 0, 2), count: learned.batches })}
            </span>
          ) : (
            <span className="text-ink-soft">{t("equipmentPage.notLearned")}</span>
          )}
        </p>
        <table className="w-full text-left text-base" data-testid="coefficients">
          <thead>
            <tr className="border-b-2 border-line text-sm text-ink-soft">
              <th scope="col" className="py-2 pr-3">
                {t("equipmentPage.face")}
              </th>
              <th scope="col" className="py-2 pr-3">
                {t("equipmentPage.defaultH")} ({wm2k})
              </th>
              <th scope="col" className="py-2">
                {t("equipmentPage.effectiveH")} ({wm2k})
              </th>
            </tr>
          </thead>
          <tbody>
            {coefficients.map((c) => (
              <tr key={c.face} className="border-b border-line">
                <th scope="row" className="py-3 pr-3 font-bold">
                  {t(`equipmentPage.faces.${c.face}`)}
                </th>
                <td className="py-3 pr-3 tabular-nums">{num(c.defaultH, 1)}</td>
                <td className="py-3 tabular-nums">
                  {c.effectiveH === null ? (
                    "—"
                  ) : (
                    <>
                      <span className="font-extrabold">{num(c.effectiveH, 1)}</span>{" "}
                      <span className="text-ink-soft">({t("equipmentPage.spread", { low: num(c.low!, 1), high: num(c.high!, 1) })})</span>
                    </>
                  )}
                </td>
              </tr>
            ))}
          </tbody>
        </table>
        <div data-testid="trend">
          <h3 className="text-sm font-bold tracking-wide text-ink-soft uppercase">{t("equipmentPage.trend")}</h3>
          <p className={`mt-1 text-base font-semibold ${trend.status === "slower" ? "text-ember" : ""}`}>
            {trend.status === "too-few"
              ? t("equipmentPage.tooFew")
              : trend.status === "slower"
                ? t("equipmentPage.slower", { recent: num(trend.recentFactor, 2), earlier: num(trend.earlierFactor, 2) })
                : t("equipmentPage.steady")}
          </p>
          <p className="mt-1 text-sm text-ink-soft">{t("glance.equipmentRule")}</p>
        </div>
      </section>

      <section className="card" aria-labelledby="learned-from">
        <h2 id="learned-from" className="text-xl font-extrabold">
          {t("equipmentPage.learnedFrom")} <span className="text-base font-bold text-ink-soft">· {t("equipmentPage.learnedCount", { count: learnedFrom.count })}</span>
        </h2>
        {learnedFrom.count === 0 ? (
          <p className="mt-2 text-base text-ink-soft">{t("equipmentPage.noneLearned")}</p>
        ) : (
          <>
            <table className="mt-3 w-full text-left text-base" data-testid="learned-from">
              <thead>
                <tr className="border-b-2 border-line text-sm text-ink-soft">
                  <th scope="col" className="py-2 pr-3">{t("equipmentPage.date")}</th>
                  <th scope="col" className="py-2 pr-3">{t("equipmentPage.product")}</th>
                  <th scope="col" className="py-2 pr-3">{t("equipmentPage.lot")}</th>
                  <th scope="col" className="py-2 pr-3">{t("equipmentPage.fitted")}</th>
                  <th scope="col" className="py-2"><span className="sr-only">{t("equipmentPage.open")}</span></th>
                </tr>
              </thead>
              <tbody>
                {learnedFrom.rows.map((b) => (
                  <tr key={b.id} className="border-b border-line">
                    <td className="py-3 pr-3 whitespace-nowrap">{b.endedAt === null ? "—" : date(b.endedAt)}</td>
                    <td className="py-3 pr-3">{b.product}</td>
                    <td className="py-3 pr-3">{b.lotCode}</td>
                    <td className="py-3 pr-3 font-bold tabular-nums">×{num(b.factor, 2)}</td>
                    <td className="py-3">
                      <Link to={`/sites/${siteId}/batches/${b.id}`} className="btn-quiet min-h-12 px-4">
                        {t("equipmentPage.open")}
                      </Link>
                    </td>
                  </tr>
                ))}
              </tbody>
            </table>
            <div className="mt-3 flex flex-wrap items-center gap-3">
              <p className="text-base text-ink-soft">{t("equipmentPage.showing", { from: first + 1, to: first + learnedFrom.rows.length, count: learnedFrom.count })}</p>
              {page > 1 ? (
                <Link to={`?page=${page - 1}`} className="btn-quiet" rel="prev">
                  {t("reviewQueue.previous")}
                </Link>
              ) : null}
              {first + learnedFrom.rows.length < learnedFrom.count ? (
                <Link to={`?page=${page + 1}`} className="btn-quiet" rel="next">
                  {t("reviewQueue.next")}
                </Link>
              ) : null}
            </div>
          </>
        )}
      </section>
    </div>
  );
}
