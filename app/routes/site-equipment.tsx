import { can, requireRole } from "~/server/guards.server";
import type { Route } from "./+types/site-equipment";

export const meta: Route.MetaFunction = () => [{ title: "Equipment · Chillwright" }];

export async function loader({ request, params }: Route.LoaderArgs) {
  await requireRole(request, can.review, params.siteId);
  return {};
}

export default function SiteEquipment() {
  return <h1 className="text-2xl font-extrabold">Equipment</h1>;
}
