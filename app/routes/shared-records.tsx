import { useCallback } from "react";
import { useTranslation } from "react-i18next";
import { Link } from "react-router";
import { SharedErrorBoundary, SharedFrame, sharedPageHeaders } from "~/components/shared-frame";
import { RecordsDownloads } from "~/components/records-downloads";
import { RecordsTable } from "~/components/records-table";
import type { RecordRow } from "~/lib/records-query";
import { getRecordFilterOptions, getRecords, parseRecordsQuery } from "~/server/records.server";
import { openShare, refuseShareWrite, shareHeader } from "~/server/share-links.server";
import type { Route } from "./+types/shared-records";

export const meta: Route.MetaFunction = () => [{ title: "Shared records · Chillwright" }, { name: "robots", content: "noindex, nofollow" }];

// GET /shared/:token — the period's records, read-only; the token alone decides (no session).
export async function loader({ request, params }: Route.LoaderArgs) {
  const share = await openShare(request, params.token, "records", "page");
  // The records view itself, held to the link's site and dates (a range outside them is left out).
  const { query, ignored } = parseRecordsQuery(new URL(request.url).searchParams, share.site.timeZone, Date.now(), share.range);
  query.site = null;
  // An inspector reads who made each entry on the records; the staff list is not offered as a filter.
  query.cook = null;
  const scope = { sites: [share.site] };
  const [records, options] = await Promise.all([getRecords(scope, query), getRecordFilterOptions(scope)]);
  await share.allow();
  return { header: shareHeader(share), token: params.token, data: { query, defaults: share.range, ignored, ...records, options: { ...options, cooks: [] } } };
}

// Nothing can be written through a share link.
export const action = ({ request, params }: Route.ActionArgs) => refuseShareWrite(request, params.token, "records", "page");

export default function SharedRecords({ loaderData }: Route.ComponentProps) {
  const { t } = useTranslation();
  const { header, token, data } = loaderData;
  const base = `/shared/${token}`;
  const batchHref = useCallback((row: RecordRow) => `${base}/batches/${row.id}`, [base]);
  return (
    <SharedFrame header={header}>
      <div className="grid gap-6">
        <div className="flex flex-wrap justify-end gap-2 print:hidden">
          <Link to={`${base}/print?from=${data.query.from}&to=${data.query.to}`} className="btn-quiet" data-testid="shared-print-link">
            {t("recordsView.print")}
          </Link>
        </div>
        <RecordsTable data={data} batchHref={batchHref} hiddenFilters={["cook"]} />
        <section className="card grid gap-4 print:hidden" aria-labelledby="shared-downloads">
          <div>
            <h2 id="shared-downloads" className="text-xl font-extrabold">
              {t("share.view.downloads")}
            </h2>
            <p className="mt-1 text-base text-ink-soft">{t("share.view.downloadsIntro")}</p>
          </div>
          <RecordsDownloads base={base} range={header} rangeTitle={t("share.view.rangeFiles", { from: header.from, to: header.to })} otherTitle={t("share.view.part")} limits={{ min: header.from, max: header.to }} />
        </section>
      </div>
    </SharedFrame>
  );
}

export const ErrorBoundary = SharedErrorBoundary;
export const headers: Route.HeadersFunction = sharedPageHeaders;
