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
  const search = new URL(request.url).searchParams;
  // Unless asked for other dates, a week's log: the last seven days of the shared range.
  if (!search.has("from") && !search.has("to")) {
    const weekStart = new Date(Date.parse(`${share.range.to}T00:00:00Z`) - 6 * 86_400_000).toISOString().slice(0, 10);
    search.set("from", weekStart > share.range.from ? weekStart : share.range.from);
    search.set("to", share.range.to);
  }
  const { query } = parseRecordsQuery(search, share.site.timeZone, Date.now(), share.range);
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
