import { can, requireRole } from "~/server/guards.server";
import type { Route } from "./+types/site-review";

export const meta: Route.MetaFunction = () => [{ title: "Review · Chillwright" }];

export async function loader({ request, params }: Route.LoaderArgs) {
  await requireRole(request, can.review, params.siteId);
  return {};
}

export default function SiteReview() {
  return <h1 className="text-2xl font-extrabold">Review</h1>;
}
