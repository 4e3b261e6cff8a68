import { useTranslation } from "react-i18next";
import { Form, Link } from "react-router";
import { NumbersTable, RateBars, StageOneHistogram, type RateRow } from "~/components/analytics-charts";
import { Figure, Notice } from "~/components/frame";
import { DEFAULT_WEEKS, defaultPeriod, formatMinutes, hourText, MAX_TIMED, MIN_GROUP, parseAnalyticsQuery, percent, shifts, type Group } from "~/lib/analytics";
import { getRuleSet, limitIn } from "~/lib/rule-sets";
import { comparedSites, getOrganisationAnalytics, getSiteAnalytics } from "~/server/analytics.server";
import { can, forbidden, requireRole } from "~/server/guards.server";
import type { Route } from "./+types/site-analytics";

export const meta: Route.MetaFunction = () => [{ title: "Analytics · Chillwright" }];

export async function loader({ request, params }: Route.LoaderArgs) {
  const { user, site, role } = await requireRole(request, can.analytics, params.siteId);
  const parsed = parseAnalyticsQuery(new URL(request.url).searchParams, site.timeZone);
  const { ignored, problem } = parsed;
  let query = parsed.query;
  if (query.scope === "all" && !can.compareSites.includes(role)) forbidden();
  const rule = getRuleSet(site.ruleSetCode);
  const stageOne = rule?.stages[0];
  const compared = query.scope === "all" ? await comparedSites(user, can.compareSites) : [];
  // Each site on its own clock: by default the period runs to the latest "today" among them.
  if (compared.length && parsed.defaulted) query = { ...query, ...defaultPeriod(compared.map((s) => s.timeZone)) };
  const common = {
    site: { id: site.id, name: site.name, timeZone: site.timeZone },
    query,
    ignored,
    problem,
    defaulted: parsed.defaulted,
    // The organisation view is offered to QA and admins who hold that role at more than one site.
    canCompare: can.compareSites.includes(role) && user.memberships.filter((m) => can.compareSites.includes(m.role)).length > 1,
    limit: stageOne ? { value: limitIn(stageOne.to, site.temperatureUnit), unit: site.temperatureUnit, minutes: stageOne.withinMinutes } : null,
  };
  if (query.scope === "all") {
    return { ...common, view: "organisation" as const, sites: await getOrganisationAnalytics(compared, query), analytics: null };
  }
  return { ...common, view: "site" as const, sites: null, analytics: await getSiteAnalytics(site, query) };
}

type Data = Route.ComponentProps["loaderData"];

export default function SiteAnalytics({ loaderData }: Route.ComponentProps) {
  const { t } = useTranslation();
  const { site, query, ignored, problem, canCompare, view, defaulted } = loaderData;
  const here = `/sites/${site.id}/analytics`;
  // A period the person chose goes along between the views; the default is worked out afresh in each.
  const periodParams = defaulted ? "" : `from=${query.from}&to=${query.to}`;
  return (
    <div className="grid gap-6">
      <div>
        <h1 className="text-2xl font-extrabold tracking-tight">{view === "organisation" ? t("analytics.titleAll") : t("analytics.title", { site: site.name })}</h1>
        <p className="mt-1 text-lg text-ink-soft">{view === "organisation" ? t("analytics.introAll") : t("analytics.intro")}</p>
      </div>
      {ignored.length ? (
        <Notice tone="warn">
          <span data-testid="analytics-ignored">
            {t("analytics.ignored", { params: ignored.map((p) => t(`analytics.param.${p}`)).join(", "), weeks: DEFAULT_WEEKS })}
            {problem ? ` ${t(`analytics.problem.${problem}`)}` : null}
          </span>
        </Notice>
      ) : null}

      <section className="card grid gap-4" aria-labelledby="period">
        <h2 id="period" className="text-sm font-bold tracking-wide text-ink-soft uppercase">
          {t("analytics.period")}
        </h2>
        <Form method="get" className="flex flex-wrap items-end gap-3">
          {view === "organisation" ? <input type="hidden" name="scope" value="all" /> : null}
          <div>
            <label htmlFor="analytics-from" className="label">
              {t("analytics.from")}
            </label>
            <input id="analytics-from" name="from" type="date" className="field" defaultValue={query.from} key={`f${query.from}`} required />
          </div>
          <div>
            <label htmlFor="analytics-to" className="label">
              {t("analytics.to")}
            </label>
            <input id="analytics-to" name="to" type="date" className="field" defaultValue={query.to} key={`t${query.to}`} required />
          </div>
          <button type="submit" className="btn-primary">
            {t("analytics.show")}
          </button>
          <Link to={view === "organisation" ? `${here}?scope=all` : here} className="btn-quiet">
            {t("analytics.lastWeeks", { weeks: DEFAULT_WEEKS })}
          </Link>
        </Form>
        <p className="text-base" data-testid="analytics-period">
          {view === "organisation" ? t("analytics.periodAll", { from: query.from, to: query.to }) : t("analytics.periodSite", { from: query.from, to: query.to, zone: site.timeZone })}
        </p>
        {canCompare || view === "organisation" ? (
          <p>
            {view === "organisation" ? (
              <Link to={periodParams ? `${here}?${periodParams}` : here} className="font-bold text-glacier-dark underline underline-offset-4">
                {t("analytics.backToSite", { site: site.name })}
              </Link>
            ) : (
              <Link to={`${here}?scope=all${periodParams ? `&${periodParams}` : ""}`} className="font-bold text-glacier-dark underline underline-offset-4">
                {t("analytics.compareSites")}
              </Link>
            )}
          </p>
        ) : null}
      </section>

      <Definitions data={loaderData} />
      <p className="text-base text-ink-soft" data-testid="analytics-source">
        {t("analytics.source")}
      </p>

      {view === "organisation" ? <Organisation data={loaderData} /> : <SiteView data={loaderData} />}
    </div>
  );
}

function Definitions({ data }: { data: Data }) {
  const { t } = useTranslation();
  const limit = data.limit;
  const limitText = limit ? `${limit.value} °${limit.unit}` : "";
  return (
    <section className="card" aria-labelledby="definitions">
      <h2 id="definitions" className="text-sm font-bold tracking-wide text-ink-soft uppercase">
        {t("analytics.definitions.title")}
      </h2>
      <dl className="mt-3 grid gap-3 text-base md:grid-cols-2" data-testid="analytics-definitions">
        <div>
          <dt className="font-extrabold">{t("analytics.definitions.countsTerm")}</dt>
          <dd>{t("analytics.definitions.counts")}</dd>
        </div>
        <div>
          <dt className="font-extrabold">{t("analytics.definitions.passTerm")}</dt>
          <dd>{t("analytics.definitions.pass")}</dd>
        </div>
        <div>
          <dt className="font-extrabold">{t("analytics.definitions.shiftTerm")}</dt>
          <dd>
            {`${t("analytics.definitions.shift")} ${shifts.map((s) => t(`analytics.shifts.${s.code}`, { from: hourText(s.fromHour), to: hourText(s.toHour) })).join("; ")}.`}
          </dd>
        </div>
        <div>
          <dt className="font-extrabold">{t("analytics.definitions.stageOneTerm")}</dt>
          <dd>{limit ? t("analytics.definitions.stageOne", { limit: limitText, time: formatMinutes(limit.minutes) }) : null}</dd>
        </div>
        <div className="md:col-span-2">
          <dt className="font-extrabold">{t("analytics.definitions.fewTerm")}</dt>
          <dd>{t("analytics.definitions.few", { min: MIN_GROUP })}</dd>
        </div>
      </dl>
    </section>
  );
}

function SiteView({ data }: { data: Data }) {
  const { t } = useTranslation();
  const a = data.analytics!;
  const limit = data.limit;
  const { overall, stageOne } = a;
  if (overall.ended === 0) {
    return (
      <p className="card text-lg font-semibold" data-testid="analytics-empty">
        {t("analytics.empty")}
      </p>
    );
  }
  const method = (code: string) => t(`library.methods.${code}`, { defaultValue: code });
  const shiftRow = (g: Group) => {
    const s = shifts.find((x) => x.code === g.key)!;
    return { ...g, label: t(`analytics.shifts.${s.code}`, { from: hourText(s.fromHour), to: hourText(s.toHour) }) };
  };
  const groups = {
    product: a.byProduct.map((g) => ({ ...g, label: g.name ?? g.key })),
    method: a.byMethod.map((g) => ({ ...g, label: method(g.key) })),
    equipment: a.byEquipment.map((g) => ({ ...g, label: g.key === "none" ? t("analytics.noUnit") : (g.name ?? g.key) })),
    shift: a.byShift.map(shiftRow),
  } satisfies Record<string, RateRow[]>;
  const limitText = limit ? `${limit.value} °${limit.unit}` : "";
  return (
    <>
      <section className="card" aria-labelledby="overall">
        <h2 id="overall" className="text-xl font-extrabold">
          {t("analytics.overall")}
        </h2>
        <dl className="mt-4 grid gap-3 sm:grid-cols-3">
          <Figure testId="analytics-pass" label={t("analytics.passRate")} value={`${percent(overall.passed, overall.ended)} %`} detail={t("analytics.passCounts", { passed: overall.passed, ended: overall.ended })} />
          <Figure
            testId="analytics-within"
            label={t("analytics.withinLimit", { limit: limitText })}
            value={`${percent(stageOne.withinLimit, stageOne.timed) ?? 0} %`}
            detail={t("analytics.withinCounts", { within: stageOne.withinLimit, count: stageOne.timed, time: limit ? formatMinutes(limit.minutes) : "" })}
          />
          <Figure
            testId="analytics-median"
            label={t("analytics.medianTime", { limit: limitText })}
            value={stageOne.medianMinutes === null ? "—" : formatMinutes(stageOne.medianMinutes)}
            detail={t("analytics.neverReached", { count: stageOne.neverReached })}
          />
        </dl>
      </section>

      {(["product", "method", "equipment", "shift"] as const).map((k) => (
        <section key={k} className="card grid gap-3" aria-labelledby={`by-${k}`}>
          <h2 id={`by-${k}`} className="text-xl font-extrabold">
            {t(`analytics.by.${k}`)}
          </h2>
          <RateBars title={t(`analytics.by.${k}`)} rows={groups[k]} testId={`rate-${k}`} />
        </section>
      ))}

      <section className="card grid gap-3" aria-labelledby="stage-one">
        <h2 id="stage-one" className="text-xl font-extrabold">
          {t("analytics.histogramTitle", { limit: limitText })}
        </h2>
        <p className="text-base text-ink-soft">{t("analytics.histogramIntro", { count: stageOne.reached })}</p>
        <StageOneHistogram title={t("analytics.histogramTitle", { limit: limitText })} histogram={stageOne.histogram} testId="stage-one-histogram" />
        <p className="text-base font-semibold" data-testid="stage-one-never">
          {t("analytics.neverReachedLong", { count: stageOne.neverReached, limit: limitText })}
        </p>
        {stageOne.otherLimit ? <p className="text-base text-ink-soft">{t("analytics.otherLimit", { count: stageOne.otherLimit })}</p> : null}
        {stageOne.capped ? <Notice tone="warn">{t("analytics.capped", { max: MAX_TIMED.toLocaleString("en-US") })}</Notice> : null}
      </section>

      <section className="card grid gap-4" aria-labelledby="fail-most">
        <h2 id="fail-most" className="text-xl font-extrabold">
          {t("analytics.failMost")}
        </h2>
        <p className="text-base text-ink-soft">{t("analytics.failMostIntro")}</p>
        <div className="grid gap-6 md:grid-cols-2">
          <FailList title={t("analytics.failProducts")} rows={groups.product} testId="fail-products" />
          <FailList title={t("analytics.failMethods")} rows={groups.method} testId="fail-methods" />
        </div>
      </section>
    </>
  );
}

/** The groups that failed most, by the number of failures and then their share; at most five. */
function FailList({ title, rows, testId }: { title: string; rows: RateRow[]; testId: string }) {
  const { t } = useTranslation();
  const ranked = rows
    .map((r) => ({ ...r, failed: r.ended - r.passed }))
    .filter((r) => r.failed > 0)
    .sort((a, b) => b.failed - a.failed || b.failed / b.ended - a.failed / a.ended || a.label.localeCompare(b.label))
    .slice(0, 5);
  return (
    <div>
      <h3 className="text-sm font-bold tracking-wide text-ink-soft uppercase">{title}</h3>
      {ranked.length === 0 ? (
        <p className="mt-2 text-base">{t("analytics.noFailures")}</p>
      ) : (
        <ol className="mt-2 grid gap-2" data-testid={testId}>
          {ranked.map((r, i) => (
            <li key={r.key} className="flex items-start gap-3 rounded-xl border-2 border-line px-4 py-3" data-group={r.key}>
              <span className="text-xl font-extrabold text-ember tabular-nums" aria-hidden="true">
                {i + 1}
              </span>
              <span className="min-w-0">
                <span className="block font-extrabold break-words">{r.label}</span>
                <span className="block text-base">{t("analytics.failedOf", { failed: r.failed, ended: r.ended, percent: percent(r.failed, r.ended) })}</span>
                {r.ended < MIN_GROUP ? <span className="block text-sm font-bold text-amber">{t("analytics.tooFew")}</span> : null}
              </span>
            </li>
          ))}
        </ol>
      )}
    </div>
  );
}

function Organisation({ data }: { data: Data }) {
  const { t } = useTranslation();
  const rows = data.sites!;
  const limit = data.limit;
  const limitText = limit ? `${limit.value} °${limit.unit}` : "";
  return (
    <>
      <section className="card grid gap-3" aria-labelledby="by-site">
        <h2 id="by-site" className="text-xl font-extrabold">
          {t("analytics.by.site")}
        </h2>
        <RateBars title={t("analytics.by.site")} rows={rows.map((s) => ({ key: s.id, label: s.name, ...s.overall }))} testId="rate-site" />
      </section>
      <section className="card grid gap-3" aria-labelledby="sites-table">
        <h2 id="sites-table" className="text-xl font-extrabold">
          {t("analytics.sitesTable")}
        </h2>
        <NumbersTable
          caption={t("analytics.sitesTable")}
          testId="sites-table"
          columns={[t("analytics.table.site"), t("analytics.table.ended"), t("analytics.table.rate"), t("analytics.table.within"), t("analytics.table.median"), t("analytics.table.never")]}
          rows={rows.map((s) => ({
            key: s.id,
            head: (
              <>
                <Link to={`/sites/${s.id}/analytics?from=${data.query.from}&to=${data.query.to}`} className="text-glacier-dark underline underline-offset-4">
                  {s.name}
                </Link>
                <span className="block text-sm font-normal text-ink-soft">{s.timeZone}</span>
              </>
            ),
            cells: [
              s.overall.ended,
              s.overall.ended ? `${percent(s.overall.passed, s.overall.ended)} %` : "—",
              s.stageOne.timed ? `${s.stageOne.withinLimit} (${percent(s.stageOne.withinLimit, s.stageOne.timed)} %)` : "—",
              s.stageOne.medianMinutes === null ? "—" : formatMinutes(s.stageOne.medianMinutes),
              s.stageOne.neverReached,
            ],
          }))}
        />
        <p className="text-base text-ink-soft">{t("analytics.sitesNote", { limit: limitText })}</p>
        {rows.some((s) => s.stageOne.capped) ? <Notice tone="warn">{t("analytics.capped", { max: MAX_TIMED.toLocaleString("en-US") })}</Notice> : null}
      </section>
    </>
  );
}
