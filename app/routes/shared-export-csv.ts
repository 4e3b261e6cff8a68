import { exportCsv } from "~/server/export.server";
import { openShare, refuseShareWrite, sharedExport } from "~/server/share-links.server";
import type { Route } from "./+types/shared-export-csv";

// GET /shared/:token/export.csv?sheet=batches|readings|actions[&from=&to=] — within the link's period.
export async function loader({ request, params }: Route.LoaderArgs) {
  const share = await openShare(request, params.token, "export-csv", "file");
  const { exporter, range, sheet } = await sharedExport(request, share);
  if (!sheet) return share.refuse(400, "sheet is one of batches, readings, actions (e.g. ?sheet=readings).");
  const res = await exportCsv(share.site, exporter, range, sheet);
  await share.allow();
  return res;
}

export const action = ({ request, params }: Route.ActionArgs) => refuseShareWrite(request, params.token, "export-csv", "file");
