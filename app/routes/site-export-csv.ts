import { can, requireRole } from "~/server/guards.server";
import { exportCsv, parseRange, parseSheet } from "~/server/export.server";
import type { Route } from "./+types/site-export-csv";

// GET /sites/:siteId/export.csv?sheet=batches|readings|actions&from=YYYY-MM-DD&to=YYYY-MM-DD
export async function loader({ request, params }: Route.LoaderArgs) {
  const { user, site } = await requireRole(request, can.exportRecords, params.siteId);
  const url = new URL(request.url);
  const sheet = parseSheet(url);
  return exportCsv(site, user, parseRange(url, site.timeZone), sheet);
}
