import { can, requireRole } from "~/server/guards.server";
import { exportWorkbook, parseRange } from "~/server/export.server";
import type { Route } from "./+types/site-export-xlsx";

// GET /sites/:siteId/export.xlsx?from=YYYY-MM-DD&to=YYYY-MM-DD (neither: last week in site time).
export async function loader({ request, params }: Route.LoaderArgs) {
  const { user, site } = await requireRole(request, can.exportRecords, params.siteId);
  const range = parseRange(new URL(request.url), site.timeZone);
  return exportWorkbook(site, user, range);
}
