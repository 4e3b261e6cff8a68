import { eq } from "drizzle-orm";
import { useTranslation } from "react-i18next";
import { Link } from "react-router";
import { organisations } from "~db/schema";
import { RecordsPrintLog } from "~/components/records-print";
import { getRuleSet } from "~/lib/rule-sets";
import { db } from "~/server/db.server";
import { can, requireRole } from "~/server/guards.server";
import { getPrintLog, parseRecordsQuery } from "~/server/records.server";
import type { Route } from "./+types/site-records-print";

export const meta: Route.MetaFunction = () => [{ title: "Cooling log · Chillwright" }];

// A week's log (or any period up to 31 days) that fits on paper: outside the app's frame, no navigation.
export async function loader({ request, params }: Route.LoaderArgs) {
  const { user, site } = await requireRole(request, can.exportRecords, params.siteId);
  const { query } = parseRecordsQuery(new URL(request.url).searchParams, site.timeZone);
  const [org] = await db.select({ name: organisations.name }).from(organisations).where(eq(organisations.id, site.organisationId));
  const log = await getPrintLog(site, query);
  const ruleSet = getRuleSet(site.ruleSetCode)!;
  return {
    siteId: site.id,
    log: {
      ...log,
      organisation: org.name,
      site: { name: site.name, timeZone: site.timeZone, unit: site.temperatureUnit, retentionDays: site.retentionDays },
      ruleSet: { name: ruleSet.name, citation: ruleSet.citation, version: ruleSet.version },
      printedAt: Date.now(),
      printedBy: user.name,
    },
  };
}

export default function SiteRecordsPrint({ loaderData }: Route.ComponentProps) {
  const { t } = useTranslation();
  const { siteId, log } = loaderData;
  return (
    <RecordsPrintLog
      log={log}
      back={
        <Link to={`/sites/${siteId}/records?from=${log.period.from}&to=${log.period.to}`} className="btn-quiet">
          {t("recordsPrint.back")}
        </Link>
      }
    />
  );
}
