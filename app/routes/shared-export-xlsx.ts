import { exportWorkbook } from "~/server/export.server";
import { openShare, refuseShareWrite, sharedExport } from "~/server/share-links.server";
import type { Route } from "./+types/shared-export-xlsx";

// GET /shared/:token/export.xlsx[?from=&to=] — the link's whole period unless a part of it is asked for.
export async function loader({ request, params }: Route.LoaderArgs) {
  const share = await openShare(request, params.token, "export-xlsx", "file");
  const { exporter, range } = await sharedExport(request, share);
  const res = await exportWorkbook(share.site, exporter, range);
  await share.allow();
  return res;
}

export const action = ({ request, params }: Route.ActionArgs) => refuseShareWrite(request, params.token, "export-xlsx", "file");
