import { can, requireRole } from "~/server/guards.server";
import type { Route } from "./+types/site-alerts";

export const meta: Route.MetaFunction = () => [{ title: "Alerts · Chillwright" }];

export async function loader({ request, params }: Route.LoaderArgs) {
  await requireRole(request, can.manageAlerts, params.siteId);
  return {};
}

export default function SiteAlerts() {
  return <h1 className="text-2xl font-extrabold">Alerts</h1>;
}
