import { useCallback } from "react";
import { useTranslation } from "react-i18next";
import { Link } from "react-router";
import { RecordsTable } from "~/components/records-table";
import type { RecordRow } from "~/lib/records-query";
import { can, requireRole } from "~/server/guards.server";
import { getRecordFilterOptions, getRecords, parseRecordsQuery } from "~/server/records.server";
import type { Route } from "./+types/site-records";

export const meta: Route.MetaFunction = () => [{ title: "Records · Chillwright" }];

export async function loader({ request, params }: Route.LoaderArgs) {
  const { user, site } = await requireRole(request, can.exportRecords, params.siteId);
  const { query, ignored, defaults } = parseRecordsQuery(new URL(request.url).searchParams, site.timeZone);
  // One site: a site filter means nothing here.
  query.site = null;
  const scope = { sites: [site] };
  const [records, options] = await Promise.all([getRecords(scope, query), getRecordFilterOptions(scope)]);
  const otherSites = user.memberships.filter((m) => m.siteId !== site.id && can.exportRecords.includes(m.role)).length;
  return {
    site: { id: site.id, name: site.name, timeZone: site.timeZone, retentionDays: site.retentionDays },
    data: { query, defaults, ignored, ...records, options },
    orgView: otherSites > 0,
  };
}

export default function SiteRecords({ loaderData }: Route.ComponentProps) {
  const { t } = useTranslation();
  const { site, data, orgView } = loaderData;
  const batchHref = useCallback((row: RecordRow) => `/sites/${row.siteId}/batches/${row.id}`, []);
  const range = `from=${data.query.from}&to=${data.query.to}`;
  return (
    <div className="grid gap-6">
      <div className="flex flex-wrap items-end justify-between gap-4">
        <div>
          <h1 className="text-2xl font-extrabold tracking-tight">{t("recordsView.title", { site: site.name })}</h1>
          <p className="mt-1 text-lg text-ink-soft">{t("recordsView.intro")}</p>
        </div>
        <div className="flex flex-wrap gap-2">
          {orgView ? (
            <Link to={`/records?${range}`} className="btn-quiet">
              {t("recordsView.titleAll")}
            </Link>
          ) : null}
          <Link to={`/sites/${site.id}/sharing`} className="btn-quiet">
            {t("nav.sharing")}
          </Link>
          <Link to={`/sites/${site.id}/records/print?${range}`} className="btn-quiet" data-testid="records-print-link">
            {t("recordsView.print")}
          </Link>
          <a href={`/sites/${site.id}/export.xlsx?${range}`} download className="btn-quiet">
            {t("recordsView.exportWorkbook")}
          </a>
          <a href={`/sites/${site.id}/export.csv?sheet=batches&${range}`} download className="btn-quiet">
            {t("recordsView.exportCsv")}
          </a>
        </div>
      </div>
      <p className="text-base text-ink-soft" data-testid="caution">
        {t("app.caution")} {t("recordsView.retention", { days: site.retentionDays, years: Math.round((site.retentionDays / 365) * 10) / 10 })}
      </p>
      <RecordsTable data={data} batchHref={batchHref} />
    </div>
  );
}
