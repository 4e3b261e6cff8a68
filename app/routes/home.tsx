import { redirect } from "react-router";
import { getUser, homePath } from "~/server/guards.server";
import { getStationDevice } from "~/server/station.server";
import type { Route } from "./+types/home";

export async function loader({ request }: Route.LoaderArgs) {
  const user = await getUser(request);
  if (user) throw redirect(homePath(user));
  if (await getStationDevice(request)) throw redirect("/station");
  throw redirect("/signin");
}
