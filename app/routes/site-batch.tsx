import { can, requireRole } from "~/server/guards.server";
import type { Route } from "./+types/site-batch";

export const meta: Route.MetaFunction = () => [{ title: "Batch · Chillwright" }];

export async function loader({ request, params }: Route.LoaderArgs) {
  await requireRole(request, can.review, params.siteId);
  return {};
}

export default function SiteBatch() {
  return <h1 className="text-2xl font-extrabold">Batch</h1>;
}
