import { useTranslation } from "react-i18next";
import { SharedErrorBoundary, SharedFrame, sharedPageHeaders } from "~/components/shared-frame";
import { RecordsDownloads } from "~/components/records-downloads";
import { SharedRecordsList } from "~/components/shared-records-list";
import { listSharedBatches, openShare, refuseShareWrite, shareHeader, SHARED_LIST_LIMIT } from "~/server/share-links.server";
import type { Route } from "./+types/shared-records";

export const meta: Route.MetaFunction = () => [{ title: "Shared records · Chillwright" }, { name: "robots", content: "noindex, nofollow" }];

// GET /shared/:token — the period's records, read-only; the token alone decides (no session).
export async function loader({ request, params }: Route.LoaderArgs) {
  const share = await openShare(request, params.token, "records", "page");
  const list = await listSharedBatches(share);
  await share.allow();
  return { header: shareHeader(share), token: params.token, batches: list.batches, truncatedAt: list.truncated ? SHARED_LIST_LIMIT : null };
}

// Nothing can be written through a share link.
export const action = ({ request, params }: Route.ActionArgs) => refuseShareWrite(request, params.token, "records", "page");

export default function SharedRecords({ loaderData }: Route.ComponentProps) {
  const { t } = useTranslation();
  const { header, token, batches, truncatedAt } = loaderData;
  const base = `/shared/${token}`;
  return (
    <SharedFrame header={header}>
      <div className="grid gap-6">
        <SharedRecordsList rows={batches} timeZone={header.timeZone} batchHref={(id) => `${base}/batches/${id}`} truncatedAt={truncatedAt} />
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
