import { and, eq, inArray } from "drizzle-orm";
import { useCallback } from "react";
import { useTranslation } from "react-i18next";
import { sites } from "~db/schema";
import { RecordsTable } from "~/components/records-table";
import type { RecordRow } from "~/lib/records-query";
import { db } from "~/server/db.server";
import { can, forbidden, requireUser } from "~/server/guards.server";
import { getRecordFilterOptions, getRecords, parseRecordsQuery } from "~/server/records.server";
import type { Route } from "./+types/records";

export const meta: Route.MetaFunction = () => [{ title: "Records of all your sites · Chillwright" }];

// The organisation's records for QA: every site where the user may read the records, and only those.
export async function loader({ request }: Route.LoaderArgs) {
  const user = await requireUser(request);
  const ids = user.memberships.filter((m) => can.exportRecords.includes(m.role)).map((m) => m.siteId);
  if (ids.length === 0) forbidden();
  const scopeSites = await db
    .select()
    .from(sites)
    .where(and(inArray(sites.id, ids), eq(sites.organisationId, user.organisationId)))
    .orderBy(sites.name);
  const scope = { sites: scopeSites };
  const { query, ignored, defaults } = parseRecordsQuery(new URL(request.url).searchParams, scopeSites[0].timeZone);
  if (query.site && !ids.includes(query.site)) {
    ignored.push("site");
    query.site = null;
  }
  const [records, options] = await Promise.all([getRecords(scope, query), getRecordFilterOptions(scope)]);
  return { data: { query, defaults, ignored, ...records, options } };
}

export default function OrganisationRecords({ loaderData }: Route.ComponentProps) {
  const { t } = useTranslation();
  const batchHref = useCallback((row: RecordRow) => `/sites/${row.siteId}/batches/${row.id}`, []);
  return (
    <div className="grid gap-6">
      <div>
        <h1 className="text-2xl font-extrabold tracking-tight">{t("recordsView.titleAll")}</h1>
        <p className="mt-1 text-lg text-ink-soft">{t("recordsView.intro")}</p>
      </div>
      <p className="text-base text-ink-soft" data-testid="caution">
        {t("app.caution")}
      </p>
      <RecordsTable data={loaderData.data} batchHref={batchHref} multiSite />
    </div>
  );
}
