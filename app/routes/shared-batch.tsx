import { useTranslation } from "react-i18next";
import { Link } from "react-router";
import { ActionsPanel, BatchHeading, BatchNotices, ChartSection, HistoryTable, SignaturesPanel, StagesPanel } from "~/components/batch-view";
import { SharedErrorBoundary, SharedFrame, sharedPageHeaders } from "~/components/shared-frame";
import { useLiveNow } from "~/components/use-live-now";
import { siteTime } from "~/lib/site-time";
import { loadBatchView } from "~/server/batch-view.server";
import { isUuid } from "~/server/guards.server";
import { isBatchInShare, openShare, refuseShareWrite, shareHeader } from "~/server/share-links.server";
import { loadVerification } from "~/server/verification.server";
import type { Route } from "./+types/shared-batch";

export const meta: Route.MetaFunction = () => [{ title: "Shared batch · Chillwright" }, { name: "robots", content: "noindex, nofollow" }];

// A share link reads as someone with no right to confirm or sign: the panels show, the forms do not.
const READER = { id: "00000000-0000-0000-0000-000000000000", role: "cook" } as const;

// GET /shared/:token/batches/:batchId — one batch of the link's site that started in its range.
export async function loader({ request, params }: Route.LoaderArgs) {
  const share = await openShare(request, params.token, "batch", "page");
  if (!isUuid(params.batchId) || !(await isBatchInShare(share, params.batchId))) return share.refuse(404);
  const view = await loadBatchView(share.site.id, params.batchId);
  if (!view) return share.refuse(404);
  const review = await loadVerification(share.site, view.batch, READER);
  await share.allow();
  return {
    ...view,
    header: shareHeader(share),
    token: params.token,
    actions: review.actions.map(({ id, kind, detail, takenBy, takenAt, confirmation }) => ({ id, kind, detail, takenBy, takenAt, confirmation })),
    signatures: review.signatures,
  };
}

export const action = ({ request, params }: Route.ActionArgs) => refuseShareWrite(request, params.token, "batch", "page");

export default function SharedBatch({ loaderData }: Route.ComponentProps) {
  const { t, i18n } = useTranslation();
  const { header, token, batch, record, readings, timeZone, actions, signatures } = loaderData;
  const now = useLiveNow(loaderData.now);
  const when = (ms: number) => siteTime(ms, timeZone, i18n.language);
  const base = `/shared/${token}`;
  return (
    <SharedFrame header={header}>
      <BatchHeading batch={batch}>
        <Link to={base} className="btn-quiet min-h-12 print:hidden">
          ← {t("share.view.back")}
        </Link>
      </BatchHeading>
      <p className="mb-4 text-base">
        {t("share.view.started")}: <strong>{when(batch.startedAt)}</strong>
        {batch.endedAt ? (
          <>
            {" · "}
            {t("recordsSheet.ended")}: <strong>{when(batch.endedAt)}</strong>
          </>
        ) : null}
      </p>
      <BatchNotices batch={batch} record={record} />
      <StagesPanel view={loaderData} now={now} whatIfs={false} />
      <ChartSection view={loaderData} now={now} />
      <HistoryTable readings={readings} timeZone={timeZone} photoHref={(id, size) => `${base}/photos/${id}${size ? `/${size}` : ""}`} />
      <ActionsPanel actions={actions} when={when} />
      <SignaturesPanel signatures={signatures} when={when} />
    </SharedFrame>
  );
}

export const ErrorBoundary = SharedErrorBoundary;
export const headers: Route.HeadersFunction = sharedPageHeaders;
