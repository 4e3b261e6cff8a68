import { getRuleSet } from "~/lib/rule-sets";
import { RecordsPrintLog } from "~/components/records-print";
import { SharedErrorBoundary, sharedPageHeaders } from "~/components/shared-frame";
import { getPrintLog, parseRecordsQuery } from "~/server/records.server";
import { openShare, refuseShareWrite } from "~/server/share-links.server";
import type { Route } from "./+types/shared-print";

export const meta: Route.MetaFunction = () => [{ title: "Cooling log · Chillwright" }, { name: "robots", content: "noindex, nofollow" }];

// GET /shared/:token/print — the paper log of the link's dates (or a part of them), read-only.
export async function loader({ request, params }: Route.LoaderArgs) {
  const share = await openShare(request, params.token, "print", "page");
  const { query } = parseRecordsQuery(new URL(request.url).searchParams, share.site.timeZone, Date.now(), share.range);
  const log = await getPrintLog(share.site, query);
  const ruleSet = getRuleSet(share.site.ruleSetCode)!;
  await share.allow();
  return {
    log: {
      ...log,
      organisation: share.organisation,
      site: { name: share.site.name, timeZone: share.site.timeZone, unit: share.site.temperatureUnit, retentionDays: share.site.retentionDays },
      ruleSet: { name: ruleSet.name, citation: ruleSet.citation, version: ruleSet.version },
      printedAt: Date.now(),
      printedBy: share.link.label,
    },
  };
}

export const action = ({ request, params }: Route.ActionArgs) => refuseShareWrite(request, params.token, "print", "page");

export default function SharedPrint({ loaderData }: Route.ComponentProps) {
  return <RecordsPrintLog log={loaderData.log} />;
}

export const ErrorBoundary = SharedErrorBoundary;
export const headers: Route.HeadersFunction = sharedPageHeaders;
